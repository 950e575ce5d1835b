-- Schema version 11 for SQLite: a lease on every claimed job.
--
-- A claim sets lease_expires_at (epoch milliseconds); the holder renews it by heartbeat while the
-- job runs, and any process may return a running job whose lease ran out to the queue. On SQLite
-- one process serves the file, so this mostly matters for a process that froze; on PostgreSQL,
-- where several replicas share the queue, it is how a killed replica's jobs come back.
-- The value is meaningful only while state = 'running'. Jobs running at this upgrade were left so
-- by a process that is gone: their lease is taken as already expired.

ALTER TABLE jobs ADD COLUMN lease_expires_at INTEGER;

UPDATE jobs SET lease_expires_at = 0 WHERE state = 'running';

CREATE INDEX jobs_running_by_lease ON jobs (lease_expires_at) WHERE state = 'running';
