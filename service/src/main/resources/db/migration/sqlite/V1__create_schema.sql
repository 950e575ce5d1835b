-- Schema version 1 for SQLite.
--
-- Conventions, chosen so the PostgreSQL migrations (db/migration/postgresql, to come) can hold
-- the same data with the same meaning:
-- * Timestamps are epoch milliseconds UTC in INTEGER columns (BIGINT on PostgreSQL): they
--   compare and sort as numbers on both, which keyset pagination relies on.
-- * Tables are STRICT so SQLite enforces column types the way PostgreSQL always does.
-- * SQLite lets a non-INTEGER PRIMARY KEY column hold NULL (a historical quirk), hence the
--   explicit NOT NULL on every key column; PostgreSQL implies it.
-- * REAL here is DOUBLE PRECISION there, BLOB is BYTEA, and jobs.errors (a JSON array of
--   strings kept as TEXT here) is JSONB there.

CREATE TABLE model_families (
    name        TEXT    NOT NULL PRIMARY KEY,
    description TEXT    NOT NULL,
    created_at  INTEGER NOT NULL
) STRICT;

CREATE TABLE model_versions (
    family             TEXT    NOT NULL REFERENCES model_families (name),
    version            INTEGER NOT NULL CHECK (version >= 1),
    status             TEXT    NOT NULL CHECK (status IN ('active', 'retired')),
    time_domain        TEXT    NOT NULL CHECK (time_domain IN ('continuous', 'discrete')),
    states             INTEGER NOT NULL CHECK (states >= 1),
    outputs            INTEGER NOT NULL CHECK (outputs >= 1),
    inputs             INTEGER NOT NULL CHECK (inputs >= 0),
    document_json      TEXT    NOT NULL,
    observability_json TEXT    NOT NULL,
    created_at         INTEGER NOT NULL,
    PRIMARY KEY (family, version)
) STRICT;

-- A published version is immutable except its status, and a retired version stays retired.
-- (PostgreSQL needs a trigger function for the same rule; SQLite's RAISE works inline.)
CREATE TRIGGER model_versions_are_immutable
BEFORE UPDATE OF family, version, time_domain, states, outputs, inputs,
                 document_json, observability_json, created_at ON model_versions
BEGIN
    SELECT RAISE(ABORT, 'model versions are immutable except status');
END;

CREATE TRIGGER model_versions_stay_retired
BEFORE UPDATE OF status ON model_versions
WHEN OLD.status = 'retired' AND NEW.status <> 'retired'
BEGIN
    SELECT RAISE(ABORT, 'a retired model version cannot become active again');
END;

CREATE TABLE traces (
    id           TEXT    NOT NULL PRIMARY KEY,
    unit_id      TEXT    NOT NULL,
    family       TEXT    NOT NULL,
    version      INTEGER NOT NULL,
    received_at  INTEGER NOT NULL,
    samples      INTEGER NOT NULL CHECK (samples >= 1),
    window_start REAL    NOT NULL,
    window_end   REAL    NOT NULL,
    payload      BLOB    NOT NULL,
    CHECK (window_end >= window_start),
    FOREIGN KEY (family, version) REFERENCES model_versions (family, version)
) STRICT;

CREATE TABLE jobs (
    id             TEXT    NOT NULL PRIMARY KEY,
    kind           TEXT    NOT NULL CHECK (kind IN ('estimate', 'regression')),
    state          TEXT    NOT NULL
                   CHECK (state IN ('queued', 'running', 'succeeded', 'failed', 'cancelled')),
    trace_id       TEXT    REFERENCES traces (id),
    params_json    TEXT,
    result_json    TEXT,
    attempt        INTEGER NOT NULL CHECK (attempt >= 0),
    created_at     INTEGER NOT NULL,
    started_at     INTEGER,
    finished_at    INTEGER,
    -- JSON array of strings, appended to and never overwritten. json_type is SQLite's JSON1;
    -- PostgreSQL's JSONB column type and jsonb_typeof do the same job there.
    errors         TEXT    CHECK (errors IS NULL OR json_type(errors) = 'array'),
    progress_done  INTEGER NOT NULL DEFAULT 0,
    progress_total INTEGER NOT NULL DEFAULT 0,
    -- Impossible rows cannot exist: a finish time exactly on the final states, a start time on
    -- every running job, a trace on every estimate job, progress within its total.
    CHECK ((finished_at IS NOT NULL) = (state IN ('succeeded', 'failed', 'cancelled'))),
    CHECK (state <> 'running' OR started_at IS NOT NULL),
    CHECK (kind <> 'estimate' OR trace_id IS NOT NULL),
    CHECK (progress_done >= 0 AND progress_done <= progress_total)
) STRICT;

-- Serves claimNext (state = 'queued' ORDER BY created_at) and the queue-depth count.
CREATE INDEX jobs_by_state_and_age ON jobs (state, created_at);

CREATE TABLE estimates (
    id           TEXT    NOT NULL PRIMARY KEY,
    -- UNIQUE: a job's result is written exactly once.
    job_id       TEXT    NOT NULL UNIQUE REFERENCES jobs (id),
    trace_id     TEXT    NOT NULL REFERENCES traces (id),
    unit_id      TEXT    NOT NULL,
    family       TEXT    NOT NULL,
    version      INTEGER NOT NULL,
    created_at   INTEGER NOT NULL,
    window_start REAL    NOT NULL,
    window_end   REAL    NOT NULL,
    chi2_per_dof REAL    CHECK (chi2_per_dof IS NULL OR chi2_per_dof >= 0),
    -- Comma-separated, '' when there are none; no flag contains a comma.
    flags        TEXT    NOT NULL DEFAULT '',
    summary_json TEXT    NOT NULL,
    series       BLOB,
    CHECK (window_end >= window_start),
    FOREIGN KEY (family, version) REFERENCES model_versions (family, version)
) STRICT;

-- Serves latestEstimate and estimateHistory: newest first per unit, id breaking ties so the
-- keyset (created_at, id) is walked in index order without a sort.
CREATE INDEX estimates_by_unit_newest ON estimates (unit_id, created_at DESC, id DESC);
CREATE INDEX estimates_by_model ON estimates (family, version, created_at);

CREATE TABLE idempotency_keys (
    unit_id    TEXT    NOT NULL,
    key        TEXT    NOT NULL,
    trace_id   TEXT    NOT NULL REFERENCES traces (id),
    job_id     TEXT    NOT NULL REFERENCES jobs (id),
    created_at INTEGER NOT NULL,
    PRIMARY KEY (unit_id, key)
) STRICT;
