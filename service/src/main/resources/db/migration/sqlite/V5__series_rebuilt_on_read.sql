-- Schema version 5 for SQLite: an estimate's fitted and residual series are no longer stored.
--
-- The series is a function of the stored trace, its model version (immutable) and the solve, so
-- GET /v1/estimates/{id}/series rebuilds it from the trace (StoredTraceSolver). Storing it cost
-- every job a blob as large as the trace payload, written to the WAL and again at checkpoint.
-- DROP COLUMN rewrites the table's rows (SQLite 3.35+; PostgreSQL: ALTER TABLE ... DROP COLUMN).

ALTER TABLE estimates DROP COLUMN series;
