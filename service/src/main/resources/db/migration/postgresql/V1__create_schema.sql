-- Schema version 1 for PostgreSQL: the same tables, keys, rules and meaning as SQLite's schema
-- after its version 11 (db/migration/sqlite), in one step. Later changes get their own version
-- per dialect; the numbers of the two folders need not match.
--
-- Conventions shared with SQLite, so one set of statements (store.Sql*) serves both:
-- * Timestamps are epoch milliseconds UTC in BIGINT; recording times epoch seconds in DOUBLE
--   PRECISION (REAL there); bytes in BYTEA (BLOB there); JSON documents in TEXT, except
--   jobs.errors, a JSONB array that statements append to.
-- * Rules SQLite states with RAISE in a trigger body need a trigger function here.
-- * instr(text, text) is defined below over strpos, as SQLite spells it.
-- * Every text column collates "C" (byte order of the UTF-8 text), as SQLite's BINARY does, so
--   keys, lists and keyset cursors sort the same on both engines whatever the database's
--   default collation (en_US.UTF-8 would put 'unit_a' before 'unit-B').

CREATE FUNCTION instr(haystack TEXT, needle TEXT) RETURNS INTEGER
    LANGUAGE sql IMMUTABLE STRICT PARALLEL SAFE
    AS 'SELECT strpos(haystack, needle)';

CREATE TABLE model_families (
    name        TEXT COLLATE "C"   NOT NULL PRIMARY KEY,
    description TEXT COLLATE "C"   NOT NULL,
    created_at  BIGINT NOT NULL
);

CREATE TABLE model_versions (
    family             TEXT COLLATE "C"    NOT NULL REFERENCES model_families (name),
    version            INTEGER NOT NULL CHECK (version >= 1),
    status             TEXT COLLATE "C"    NOT NULL CHECK (status IN ('active', 'retired')),
    time_domain        TEXT COLLATE "C"    NOT NULL CHECK (time_domain IN ('continuous', 'discrete')),
    states             INTEGER NOT NULL CHECK (states >= 1),
    outputs            INTEGER NOT NULL CHECK (outputs >= 1),
    inputs             INTEGER NOT NULL CHECK (inputs >= 0),
    document_json      TEXT COLLATE "C"    NOT NULL,
    observability_json TEXT COLLATE "C"    NOT NULL,
    created_at         BIGINT  NOT NULL,
    PRIMARY KEY (family, version)
);

-- A published version is immutable except its status, and a retired version stays retired.
CREATE FUNCTION model_versions_guard() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    IF (NEW.family, NEW.version, NEW.time_domain, NEW.states, NEW.outputs, NEW.inputs, NEW.document_json,
        NEW.observability_json, NEW.created_at)
       IS DISTINCT FROM (OLD.family, OLD.version, OLD.time_domain, OLD.states, OLD.outputs, OLD.inputs,
        OLD.document_json, OLD.observability_json, OLD.created_at) THEN
        RAISE EXCEPTION 'model versions are immutable except status';
    END IF;
    IF OLD.status = 'retired' AND NEW.status <> 'retired' THEN
        RAISE EXCEPTION 'a retired model version cannot become active again';
    END IF;
    RETURN NEW;
END $$;

CREATE TRIGGER model_versions_guard BEFORE UPDATE ON model_versions
    FOR EACH ROW EXECUTE FUNCTION model_versions_guard();

CREATE TABLE traces (
    id           TEXT COLLATE "C"             NOT NULL PRIMARY KEY,
    unit_id      TEXT COLLATE "C"             NOT NULL,
    family       TEXT COLLATE "C"             NOT NULL,
    version      INTEGER          NOT NULL,
    received_at  BIGINT           NOT NULL,
    samples      INTEGER          NOT NULL CHECK (samples >= 1),
    window_start DOUBLE PRECISION NOT NULL,
    window_end   DOUBLE PRECISION NOT NULL,
    payload      BYTEA            NOT NULL,
    CHECK (window_end >= window_start),
    FOREIGN KEY (family, version) REFERENCES model_versions (family, version)
);

CREATE INDEX traces_by_family_unit_recorded ON traces (family, unit_id, window_start DESC, received_at DESC, id DESC);
CREATE INDEX traces_by_model_recorded ON traces (family, version, window_start, received_at);

CREATE TABLE jobs (
    id               TEXT COLLATE "C"    NOT NULL PRIMARY KEY,
    kind             TEXT COLLATE "C"    NOT NULL CHECK (kind IN ('estimate', 'regression')),
    state            TEXT COLLATE "C"    NOT NULL
                     CHECK (state IN ('queued', 'running', 'succeeded', 'failed', 'cancelled')),
    trace_id         TEXT COLLATE "C"    REFERENCES traces (id),
    params_json      TEXT COLLATE "C",
    result_json      TEXT COLLATE "C",
    attempt          INTEGER NOT NULL CHECK (attempt >= 0),
    created_at       BIGINT  NOT NULL,
    started_at       BIGINT,
    finished_at      BIGINT,
    -- JSON array of strings, appended to and never overwritten.
    errors           JSONB   CHECK (errors IS NULL OR jsonb_typeof(errors) = 'array'),
    progress_done    INTEGER NOT NULL DEFAULT 0,
    progress_total   INTEGER NOT NULL DEFAULT 0,
    failure_json     TEXT COLLATE "C"    CHECK (failure_json IS NULL OR (state = 'failed' AND failure_json::jsonb IS NOT NULL)),
    -- Meaningful only while running: when the holder's claim runs out unless renewed.
    lease_expires_at BIGINT,
    CHECK ((finished_at IS NOT NULL) = (state IN ('succeeded', 'failed', 'cancelled'))),
    CHECK (state <> 'running' OR started_at IS NOT NULL),
    CHECK (kind <> 'estimate' OR trace_id IS NOT NULL),
    CHECK (progress_done >= 0 AND progress_done <= progress_total)
);

CREATE INDEX jobs_by_state_and_age ON jobs (state, created_at);
CREATE INDEX jobs_running_by_lease ON jobs (lease_expires_at) WHERE state = 'running';

-- The queue's length in one row, kept by a trigger in the same transaction as every job change.
-- The same trigger sends NOTIFY backstate_jobs when a job joins the queue, delivered at commit,
-- so idle workers of every replica (LISTEN backstate_jobs) claim at once instead of at their
-- next poll.
CREATE TABLE queue_length (
    id     INTEGER NOT NULL PRIMARY KEY CHECK (id = 1),
    queued INTEGER NOT NULL CHECK (queued >= 0)
);

INSERT INTO queue_length (id, queued) VALUES (1, 0);

CREATE FUNCTION queue_length_keep() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE
    delta INTEGER := 0;
BEGIN
    IF TG_OP IN ('UPDATE', 'DELETE') AND OLD.state = 'queued' THEN
        delta := delta - 1;
    END IF;
    IF TG_OP IN ('INSERT', 'UPDATE') AND NEW.state = 'queued' THEN
        delta := delta + 1;
    END IF;
    IF delta <> 0 THEN
        UPDATE queue_length SET queued = queued + delta WHERE id = 1;
    END IF;
    IF delta > 0 THEN
        PERFORM pg_notify('backstate_jobs', '');
    END IF;
    RETURN NULL;
END $$;

CREATE TRIGGER queue_length_keep AFTER INSERT OR UPDATE OF state OR DELETE ON jobs
    FOR EACH ROW EXECUTE FUNCTION queue_length_keep();

CREATE TABLE estimates (
    id           TEXT COLLATE "C"             NOT NULL PRIMARY KEY,
    -- UNIQUE: a job's result is written exactly once.
    job_id       TEXT COLLATE "C"             NOT NULL UNIQUE REFERENCES jobs (id),
    trace_id     TEXT COLLATE "C"             NOT NULL REFERENCES traces (id),
    unit_id      TEXT COLLATE "C"             NOT NULL,
    family       TEXT COLLATE "C"             NOT NULL,
    version      INTEGER          NOT NULL,
    created_at   BIGINT           NOT NULL,
    window_start DOUBLE PRECISION NOT NULL,
    window_end   DOUBLE PRECISION NOT NULL,
    chi2_per_dof DOUBLE PRECISION CHECK (chi2_per_dof IS NULL OR chi2_per_dof >= 0),
    -- Comma-separated, '' when there are none; no flag contains a comma.
    flags        TEXT COLLATE "C"             NOT NULL DEFAULT '',
    summary_json TEXT COLLATE "C"             NOT NULL,
    received_at  BIGINT           NOT NULL DEFAULT 0,
    CHECK (window_end >= window_start),
    FOREIGN KEY (family, version) REFERENCES model_versions (family, version)
);

CREATE INDEX estimates_by_model_recorded ON estimates (family, version, window_start, received_at, unit_id,
                                                       chi2_per_dof, flags);
CREATE INDEX estimates_by_unit_recorded ON estimates (unit_id, window_start DESC, created_at DESC, id DESC);

CREATE TABLE estimate_states (
    estimate_id    TEXT COLLATE "C" NOT NULL REFERENCES estimates (id),
    state          TEXT COLLATE "C" NOT NULL,
    value          DOUBLE PRECISION,
    standard_error DOUBLE PRECISION,
    lower          DOUBLE PRECISION,
    upper          DOUBLE PRECISION,
    PRIMARY KEY (estimate_id, state)
);

CREATE TABLE estimate_channels (
    family       TEXT COLLATE "C"             NOT NULL,
    version      INTEGER          NOT NULL,
    channel      TEXT COLLATE "C"             NOT NULL,
    window_start DOUBLE PRECISION NOT NULL,
    estimate_id  TEXT COLLATE "C"             NOT NULL REFERENCES estimates (id),
    received_at  BIGINT           NOT NULL,
    -- NULL when the channel had no present sample.
    rms          DOUBLE PRECISION CHECK (rms IS NULL OR rms >= 0),
    PRIMARY KEY (family, version, channel, window_start, estimate_id)
);

CREATE TABLE unit_latest (
    family       TEXT COLLATE "C"             NOT NULL,
    unit_id      TEXT COLLATE "C"             NOT NULL,
    version      INTEGER          NOT NULL,
    estimate_id  TEXT COLLATE "C"             NOT NULL REFERENCES estimates (id),
    window_start DOUBLE PRECISION NOT NULL,
    window_end   DOUBLE PRECISION NOT NULL,
    received_at  BIGINT           NOT NULL,
    created_at   BIGINT           NOT NULL,
    chi2_per_dof DOUBLE PRECISION,
    flags        TEXT COLLATE "C"             NOT NULL,
    PRIMARY KEY (family, unit_id)
);

CREATE INDEX unit_latest_by_recording ON unit_latest (family, window_start, unit_id);

CREATE TABLE unit_version_latest (
    family       TEXT COLLATE "C"             NOT NULL,
    version      INTEGER          NOT NULL,
    unit_id      TEXT COLLATE "C"             NOT NULL,
    estimate_id  TEXT COLLATE "C"             NOT NULL REFERENCES estimates (id),
    window_start DOUBLE PRECISION NOT NULL,
    window_end   DOUBLE PRECISION NOT NULL,
    received_at  BIGINT           NOT NULL,
    created_at   BIGINT           NOT NULL,
    chi2_per_dof DOUBLE PRECISION,
    flags        TEXT COLLATE "C"             NOT NULL,
    PRIMARY KEY (family, version, unit_id)
);

CREATE INDEX unit_version_latest_by_recording ON unit_version_latest (family, version, window_start, unit_id);

CREATE TABLE idempotency_keys (
    unit_id     TEXT COLLATE "C"   NOT NULL,
    key         TEXT COLLATE "C"   NOT NULL,
    trace_id    TEXT COLLATE "C"   NOT NULL REFERENCES traces (id),
    job_id      TEXT COLLATE "C"   NOT NULL REFERENCES jobs (id),
    created_at  BIGINT NOT NULL,
    fingerprint BYTEA  CHECK (fingerprint IS NULL OR length(fingerprint) = 32),
    PRIMARY KEY (unit_id, key)
);

CREATE TABLE regressions (
    job_id              TEXT COLLATE "C"    NOT NULL PRIMARY KEY REFERENCES jobs (id),
    family              TEXT COLLATE "C"    NOT NULL,
    baseline            INTEGER NOT NULL,
    candidate           INTEGER NOT NULL,
    created_at          BIGINT  NOT NULL,
    -- Set once by a cancel request while the job is queued or running; the worker polls it.
    cancel_requested_at BIGINT,
    CHECK (baseline <> candidate),
    FOREIGN KEY (family, baseline) REFERENCES model_versions (family, version),
    FOREIGN KEY (family, candidate) REFERENCES model_versions (family, version)
);

CREATE INDEX regressions_by_family_newest ON regressions (family, created_at DESC, job_id DESC);
CREATE INDEX regressions_newest ON regressions (created_at DESC, job_id DESC);

CREATE TABLE api_keys (
    id           TEXT COLLATE "C"   NOT NULL PRIMARY KEY CHECK (length(id) = 16),
    role         TEXT COLLATE "C"   NOT NULL CHECK (role IN ('admin', 'gateway', 'reader', 'pipeline')),
    -- A glob over unit IDs; exactly the gateway keys have one.
    unit_pattern TEXT COLLATE "C",
    label        TEXT COLLATE "C"   NOT NULL,
    salt         BYTEA  NOT NULL CHECK (length(salt) = 16),
    hash         BYTEA  NOT NULL CHECK (length(hash) = 32),
    created_at   BIGINT NOT NULL,
    -- The admin key that issued this one; NULL for the first admin key and with access control off.
    created_by   TEXT COLLATE "C",
    revoked_at   BIGINT,
    CHECK ((role = 'gateway') = (unit_pattern IS NOT NULL)),
    CHECK (revoked_at IS NULL OR revoked_at >= created_at)
);

-- A key is immutable except its revocation, and a revoked key stays revoked.
CREATE FUNCTION api_keys_guard() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    IF (NEW.id, NEW.role, NEW.unit_pattern, NEW.label, NEW.salt, NEW.hash, NEW.created_at, NEW.created_by)
       IS DISTINCT FROM (OLD.id, OLD.role, OLD.unit_pattern, OLD.label, OLD.salt, OLD.hash, OLD.created_at,
                         OLD.created_by) THEN
        RAISE EXCEPTION 'API keys are immutable except their revocation';
    END IF;
    IF OLD.revoked_at IS NOT NULL AND NEW.revoked_at IS DISTINCT FROM OLD.revoked_at THEN
        RAISE EXCEPTION 'a revoked API key stays revoked';
    END IF;
    RETURN NEW;
END $$;

CREATE TRIGGER api_keys_guard BEFORE UPDATE ON api_keys
    FOR EACH ROW EXECUTE FUNCTION api_keys_guard();
