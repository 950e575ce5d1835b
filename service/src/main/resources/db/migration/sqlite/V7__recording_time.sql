-- Schema version 7 for SQLite: history, trend, fleet views and regression selection order and
-- filter by recording time, the trace's own window, instead of by when the service received the
-- trace or wrote its estimate (conventions as in V1).
--
-- Gateways upload late and in batches, so arrival order is not recording order. Recording time
-- is window_start: the first sample's time in epoch seconds (REAL, on the microsecond grid; see
-- formats.RecordingTime), which traces and estimates already hold. Received time stays available
-- as a filter, so estimates get a copy of their trace's received_at. Every index served an order
-- by created_at or received_at; each is replaced by one on window_start, and the tables derived
-- from estimates (V2) are rebuilt with window_start in their keys and filled again.

-- An estimate's trace's received_at. ADD COLUMN needs a default for the rows already there; the
-- UPDATE replaces it at once, and SqliteEstimates always writes the trace's value.
-- (PostgreSQL: ADD COLUMN received_at BIGINT, the same UPDATE, then SET NOT NULL.)
ALTER TABLE estimates ADD COLUMN received_at INTEGER NOT NULL DEFAULT 0;
UPDATE estimates SET received_at = (SELECT t.received_at FROM traces t WHERE t.id = estimates.trace_id);

-- latestEstimate, estimateHistory and a unit's trend: a unit's estimates newest recording first,
-- then newest written (a trace posted again, or under another version), id breaking ties, so the
-- keyset (window_start, created_at, id) is walked in index order without a sort.
DROP INDEX estimates_by_unit_newest;
CREATE INDEX estimates_by_unit_recorded ON estimates (unit_id, window_start DESC, created_at DESC, id DESC);

-- The fleet summary's pass over a model version's recording window, covering (the rows hold the
-- large summary_json); received_at is there for the received-time filter. V1's
-- estimates_by_model was a prefix of the index it replaces and served nothing else.
DROP INDEX estimates_by_model;
DROP INDEX estimates_by_model_window;
CREATE INDEX estimates_by_model_recorded ON estimates (family, version, window_start, received_at, unit_id,
                                                       chi2_per_dof, flags);

-- The fleet summary's trace count per model version and recording window (covering).
DROP INDEX traces_by_model_received;
CREATE INDEX traces_by_model_recorded ON traces (family, version, window_start, received_at);

-- selectTraces: a family's traces per unit newest recording first, without reading payloads.
DROP INDEX traces_by_family_unit_received;
CREATE INDEX traces_by_family_unit_recorded ON traces (family, unit_id, window_start DESC, received_at DESC, id DESC);

-- The derived tables, rebuilt: each still holds exactly what SqliteFleet.recordEstimate writes
-- with every estimate, now keyed and ordered by recording time.
DROP VIEW estimate_document_channels;
CREATE VIEW estimate_document_channels AS
SELECT e.id AS estimate_id,
       e.job_id AS job_id,
       e.family AS family,
       e.version AS version,
       json_extract(ch.value, '$.output') AS channel,
       e.window_start AS window_start,
       e.received_at AS received_at,
       CASE WHEN json_type(ch.value, '$.rms') IN ('integer', 'real')
            THEN json_extract(ch.value, '$.rms') END AS rms
FROM estimates e,
     json_each(CASE WHEN json_valid(e.summary_json) AND json_type(e.summary_json, '$.residuals.channels') = 'array'
                    THEN e.summary_json ELSE '{"residuals":{"channels":[]}}' END, '$.residuals.channels') ch
WHERE ch.type = 'object' AND json_type(ch.value, '$.output') = 'text';

-- One row per output channel: a recording window of one channel of one model version is one
-- contiguous range of the key; received_at rides along for the received-time filter.
DROP TABLE estimate_channels;
CREATE TABLE estimate_channels (
    family       TEXT    NOT NULL,
    version      INTEGER NOT NULL,
    channel      TEXT    NOT NULL,
    window_start REAL    NOT NULL,
    estimate_id  TEXT    NOT NULL REFERENCES estimates (id),
    received_at  INTEGER NOT NULL,
    -- NULL when the channel had no present sample.
    rms          REAL    CHECK (rms IS NULL OR rms >= 0),
    PRIMARY KEY (family, version, channel, window_start, estimate_id)
) STRICT, WITHOUT ROWID;

-- Each unit's newest estimate per model family (any version), newest in the order of
-- estimates_by_unit_recorded: (window_start, created_at, id). Stale units are those whose newest
-- recording started before the cutoff.
DROP TABLE unit_latest;
CREATE TABLE unit_latest (
    family       TEXT    NOT NULL,
    unit_id      TEXT    NOT NULL,
    version      INTEGER NOT NULL,
    estimate_id  TEXT    NOT NULL REFERENCES estimates (id),
    window_start REAL    NOT NULL,
    window_end   REAL    NOT NULL,
    received_at  INTEGER NOT NULL,
    created_at   INTEGER NOT NULL,
    chi2_per_dof REAL,
    flags        TEXT    NOT NULL,
    PRIMARY KEY (family, unit_id)
) STRICT, WITHOUT ROWID;

CREATE INDEX unit_latest_by_recording ON unit_latest (family, window_start, unit_id);

-- The same per model version.
DROP TABLE unit_version_latest;
CREATE TABLE unit_version_latest (
    family       TEXT    NOT NULL,
    version      INTEGER NOT NULL,
    unit_id      TEXT    NOT NULL,
    estimate_id  TEXT    NOT NULL REFERENCES estimates (id),
    window_start REAL    NOT NULL,
    window_end   REAL    NOT NULL,
    received_at  INTEGER NOT NULL,
    created_at   INTEGER NOT NULL,
    chi2_per_dof REAL,
    flags        TEXT    NOT NULL,
    PRIMARY KEY (family, version, unit_id)
) STRICT, WITHOUT ROWID;

CREATE INDEX unit_version_latest_by_recording ON unit_version_latest (family, version, window_start, unit_id);

-- Fill them for every estimate, with SqliteFleet's statements ("WHERE true": see V2).
INSERT INTO estimate_channels (family, version, channel, window_start, estimate_id, received_at, rms)
SELECT family, version, channel, window_start, estimate_id, received_at, rms FROM estimate_document_channels WHERE true
ON CONFLICT DO NOTHING;

INSERT INTO unit_latest (family, unit_id, version, estimate_id, window_start, window_end, received_at, created_at,
                         chi2_per_dof, flags)
SELECT family, unit_id, version, id, window_start, window_end, received_at, created_at, chi2_per_dof, flags
FROM estimates WHERE true
ON CONFLICT (family, unit_id) DO UPDATE SET
    version = excluded.version, estimate_id = excluded.estimate_id, window_start = excluded.window_start,
    window_end = excluded.window_end, received_at = excluded.received_at, created_at = excluded.created_at,
    chi2_per_dof = excluded.chi2_per_dof, flags = excluded.flags
WHERE (excluded.window_start, excluded.created_at, excluded.estimate_id)
    > (unit_latest.window_start, unit_latest.created_at, unit_latest.estimate_id);

INSERT INTO unit_version_latest (family, version, unit_id, estimate_id, window_start, window_end, received_at,
                                 created_at, chi2_per_dof, flags)
SELECT family, version, unit_id, id, window_start, window_end, received_at, created_at, chi2_per_dof, flags
FROM estimates WHERE true
ON CONFLICT (family, version, unit_id) DO UPDATE SET
    estimate_id = excluded.estimate_id, window_start = excluded.window_start, window_end = excluded.window_end,
    received_at = excluded.received_at, created_at = excluded.created_at,
    chi2_per_dof = excluded.chi2_per_dof, flags = excluded.flags
WHERE (excluded.window_start, excluded.created_at, excluded.estimate_id)
    > (unit_version_latest.window_start, unit_version_latest.created_at, unit_version_latest.estimate_id);
