-- Schema version 2 for SQLite: what the fleet views read (conventions as in V1).
--
-- Every table here is derived from estimates and never edited by hand: SqliteFleet.recordEstimate
-- fills it in the transaction that writes the estimate (SqliteJobs.completeIfRunning), and the
-- statements at the end of this file fill it for estimates written before this migration. Both
-- read the estimate document (formats.EstimateDocument) through the views below, so its JSON
-- layout is spelled out once. Fleet queries then never parse JSON.

-- The estimate document's states[] as rows. json_each and json_extract are SQLite's JSON1;
-- PostgreSQL reads the same from JSONB with jsonb_array_elements and ->>. Numbers are taken only
-- when they are JSON numbers (the document writes null for a non-finite value), and a summary
-- that is not a document yields no rows rather than failing the estimate's write.
CREATE VIEW estimate_document_states AS
SELECT e.id AS estimate_id,
       e.job_id AS job_id,
       json_extract(s.value, '$.name') AS state,
       CASE WHEN json_type(s.value, '$.estimate') IN ('integer', 'real')
            THEN json_extract(s.value, '$.estimate') END AS value,
       CASE WHEN json_type(s.value, '$.standardError') IN ('integer', 'real')
            THEN json_extract(s.value, '$.standardError') END AS standard_error,
       CASE WHEN json_type(s.value, '$.lower') IN ('integer', 'real')
            THEN json_extract(s.value, '$.lower') END AS lower,
       CASE WHEN json_type(s.value, '$.upper') IN ('integer', 'real')
            THEN json_extract(s.value, '$.upper') END AS upper
FROM estimates e,
     json_each(CASE WHEN json_valid(e.summary_json) AND json_type(e.summary_json, '$.states') = 'array'
                    THEN e.summary_json ELSE '{"states":[]}' END, '$.states') s
WHERE s.type = 'object' AND json_type(s.value, '$.name') = 'text';

-- The estimate document's residuals.channels[] as rows, with the estimate's model and time.
CREATE VIEW estimate_document_channels AS
SELECT e.id AS estimate_id,
       e.job_id AS job_id,
       e.family AS family,
       e.version AS version,
       json_extract(ch.value, '$.output') AS channel,
       e.created_at AS created_at,
       CASE WHEN json_type(ch.value, '$.rms') IN ('integer', 'real')
            THEN json_extract(ch.value, '$.rms') END AS rms
FROM estimates e,
     json_each(CASE WHEN json_valid(e.summary_json) AND json_type(e.summary_json, '$.residuals.channels') = 'array'
                    THEN e.summary_json ELSE '{"residuals":{"channels":[]}}' END, '$.residuals.channels') ch
WHERE ch.type = 'object' AND json_type(ch.value, '$.output') = 'text';

-- One row per estimated state, for a unit's trend (read through estimates_by_unit_newest, then
-- this key): the estimate and its 95 % interval.
CREATE TABLE estimate_states (
    estimate_id    TEXT NOT NULL REFERENCES estimates (id),
    state          TEXT NOT NULL,
    value          REAL,
    standard_error REAL,
    lower          REAL,
    upper          REAL,
    PRIMARY KEY (estimate_id, state)
) STRICT, WITHOUT ROWID;

-- One row per output channel, keyed for the fleet summary: a time window of one channel of one
-- model version is one contiguous range of the key, so its RMS values are read without
-- touching estimates. Hence the copies of family, version and created_at.
CREATE TABLE estimate_channels (
    family      TEXT    NOT NULL,
    version     INTEGER NOT NULL,
    channel     TEXT    NOT NULL,
    created_at  INTEGER NOT NULL,
    estimate_id TEXT    NOT NULL REFERENCES estimates (id),
    -- NULL when the channel had no present sample.
    rms         REAL    CHECK (rms IS NULL OR rms >= 0),
    PRIMARY KEY (family, version, channel, created_at, estimate_id)
) STRICT, WITHOUT ROWID;

-- Each unit's newest estimate per model family (any version): the fleet's unit list without a
-- version filter, and stale units. "Newest" is the order of estimates_by_unit_newest:
-- created_at, then id.
CREATE TABLE unit_latest (
    family       TEXT    NOT NULL,
    unit_id      TEXT    NOT NULL,
    version      INTEGER NOT NULL,
    estimate_id  TEXT    NOT NULL REFERENCES estimates (id),
    created_at   INTEGER NOT NULL,
    chi2_per_dof REAL,
    flags        TEXT    NOT NULL,
    PRIMARY KEY (family, unit_id)
) STRICT, WITHOUT ROWID;

CREATE INDEX unit_latest_by_age ON unit_latest (family, created_at, unit_id);

-- The same per model version: the unit list and stale units with a version filter.
CREATE TABLE unit_version_latest (
    family       TEXT    NOT NULL,
    version      INTEGER NOT NULL,
    unit_id      TEXT    NOT NULL,
    estimate_id  TEXT    NOT NULL REFERENCES estimates (id),
    created_at   INTEGER NOT NULL,
    chi2_per_dof REAL,
    flags        TEXT    NOT NULL,
    PRIMARY KEY (family, version, unit_id)
) STRICT, WITHOUT ROWID;

CREATE INDEX unit_version_latest_by_age ON unit_version_latest (family, version, created_at, unit_id);

-- Serves the fleet summary's pass over a window of one model version's estimates: covering, so
-- counts, χ²/dof and flags come from the index alone (the rows hold the large summary_json).
CREATE INDEX estimates_by_model_window ON estimates (family, version, created_at, unit_id, chi2_per_dof, flags);

-- Serves the fleet summary's trace count per model version and window.
CREATE INDEX traces_by_model_received ON traces (family, version, received_at);

-- Fill the derived tables for estimates written before this migration (SqliteFleet's
-- statements, for every estimate instead of one job's). "WHERE true" is SQLite's documented way
-- to let an INSERT … SELECT carry an ON CONFLICT clause without a parsing ambiguity.
INSERT INTO estimate_states (estimate_id, state, value, standard_error, lower, upper)
SELECT estimate_id, state, value, standard_error, lower, upper FROM estimate_document_states WHERE true
ON CONFLICT DO NOTHING;

INSERT INTO estimate_channels (family, version, channel, created_at, estimate_id, rms)
SELECT family, version, channel, created_at, estimate_id, rms FROM estimate_document_channels WHERE true
ON CONFLICT DO NOTHING;

INSERT INTO unit_latest (family, unit_id, version, estimate_id, created_at, chi2_per_dof, flags)
SELECT family, unit_id, version, id, created_at, chi2_per_dof, flags FROM estimates WHERE true
ON CONFLICT (family, unit_id) DO UPDATE SET
    version = excluded.version, estimate_id = excluded.estimate_id, created_at = excluded.created_at,
    chi2_per_dof = excluded.chi2_per_dof, flags = excluded.flags
WHERE (excluded.created_at, excluded.estimate_id) > (unit_latest.created_at, unit_latest.estimate_id);

INSERT INTO unit_version_latest (family, version, unit_id, estimate_id, created_at, chi2_per_dof, flags)
SELECT family, version, unit_id, id, created_at, chi2_per_dof, flags FROM estimates WHERE true
ON CONFLICT (family, version, unit_id) DO UPDATE SET
    estimate_id = excluded.estimate_id, created_at = excluded.created_at,
    chi2_per_dof = excluded.chi2_per_dof, flags = excluded.flags
WHERE (excluded.created_at, excluded.estimate_id) > (unit_version_latest.created_at, unit_version_latest.estimate_id);
