-- Schema version 6 for SQLite: the queue's length kept in one row, so the bound checked on every
-- trace post costs one row read instead of a count over the queued jobs.
--
-- COUNT(*) over jobs_by_state_and_age walks every queued entry: under a flood of posts the queue
-- is thousands deep, and that walk, repeated inside the one write transaction per post, took
-- about a third of the writer's time. Triggers keep the count in the same transaction as the job
-- change, whichever statement made it, so it cannot drift; the backfill below starts it right.
-- PostgreSQL: the same table, with one plpgsql trigger function for the four triggers.

CREATE TABLE queue_length (
    id     INTEGER NOT NULL PRIMARY KEY CHECK (id = 1),
    queued INTEGER NOT NULL CHECK (queued >= 0)
) STRICT;

INSERT INTO queue_length (id, queued) SELECT 1, count(*) FROM jobs WHERE state = 'queued';

CREATE TRIGGER queue_length_on_insert AFTER INSERT ON jobs WHEN NEW.state = 'queued'
BEGIN
    UPDATE queue_length SET queued = queued + 1 WHERE id = 1;
END;

CREATE TRIGGER queue_length_on_leaving AFTER UPDATE OF state ON jobs
    WHEN OLD.state = 'queued' AND NEW.state <> 'queued'
BEGIN
    UPDATE queue_length SET queued = queued - 1 WHERE id = 1;
END;

CREATE TRIGGER queue_length_on_return AFTER UPDATE OF state ON jobs
    WHEN OLD.state <> 'queued' AND NEW.state = 'queued'
BEGIN
    UPDATE queue_length SET queued = queued + 1 WHERE id = 1;
END;

CREATE TRIGGER queue_length_on_delete AFTER DELETE ON jobs WHEN OLD.state = 'queued'
BEGIN
    UPDATE queue_length SET queued = queued - 1 WHERE id = 1;
END;
