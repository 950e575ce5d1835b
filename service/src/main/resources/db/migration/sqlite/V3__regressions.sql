-- Schema version 3 for SQLite: model-version regression runs (conventions as in V1).
--
-- A regression run is a job of kind 'regression' (its request and trace IDs in jobs.params_json,
-- its result in jobs.result_json); this table adds what the job row cannot hold: the family and
-- the two versions to list and filter by, and the cancel request a running job polls for.

CREATE TABLE regressions (
    job_id              TEXT    NOT NULL PRIMARY KEY REFERENCES jobs (id),
    family              TEXT    NOT NULL,
    baseline            INTEGER NOT NULL,
    candidate           INTEGER NOT NULL,
    created_at          INTEGER NOT NULL,
    -- Set once by a cancel request while the job is queued or running; the worker polls it
    -- between traces and then finishes the job as cancelled.
    cancel_requested_at INTEGER,
    CHECK (baseline <> candidate),
    FOREIGN KEY (family, baseline) REFERENCES model_versions (family, version),
    FOREIGN KEY (family, candidate) REFERENCES model_versions (family, version)
) STRICT;

-- Serves listRegressions: newest first, optionally per family, keyset (created_at, job_id).
CREATE INDEX regressions_newest ON regressions (created_at DESC, job_id DESC);
CREATE INDEX regressions_by_family_newest ON regressions (family, created_at DESC, job_id DESC);

-- Serves selectTraces: a family's traces per unit by received time, without reading payloads.
CREATE INDEX traces_by_family_unit_received ON traces (family, unit_id, received_at DESC, id DESC);
