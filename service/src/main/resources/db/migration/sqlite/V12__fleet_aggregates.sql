-- Schema version 12 for SQLite: running totals for the all-time fleet summary, so it costs
-- O(units + occupied value bins) instead of a pass over every estimate and trace.
--
-- Every table here is derived and never edited by hand. SqlFleet.recordEstimate adds to
-- fleet_unit_estimates, fleet_unit_flags, fleet_chi2_bins and fleet_rms_bins in the transaction
-- that writes the estimate (estimates are never updated or deleted, so totals only grow); the
-- trigger below adds to fleet_unit_traces in the transaction that stores a trace, whichever
-- path stores it. The statements at the end fill every table for rows written before this
-- migration, with the same bin expression as SqlFleet.BIN_OF_VALUE.
--
-- Keys are per unit, not per model version, so replicas writing at once on PostgreSQL touch
-- different rows (V2 there): one counter per version would be one hot row every write waits on.
--
-- Value bins: bin = floor(256 · ln v), each 0.39 % wide; v <= 0 goes to bin -1000000 (ln has no
-- value there) and v > 1e300 to bin 1000000. The expression is non-decreasing in v, so the
-- values of the bins below b are exactly the values below the bin's smallest value, low_value:
-- a quantile's rank finds its bin from the counts, then the value is read through the index on
-- the column, starting at low_value, a few thousand index entries at most (see
-- docs/fleet-and-planning.md).

CREATE TABLE fleet_unit_estimates (
    family    TEXT    NOT NULL,
    version   INTEGER NOT NULL,
    unit_id   TEXT    NOT NULL,
    estimates INTEGER NOT NULL CHECK (estimates >= 1),
    PRIMARY KEY (family, version, unit_id)
) STRICT, WITHOUT ROWID;

CREATE TABLE fleet_unit_traces (
    family  TEXT    NOT NULL,
    version INTEGER NOT NULL,
    unit_id TEXT    NOT NULL,
    traces  INTEGER NOT NULL CHECK (traces >= 1),
    PRIMARY KEY (family, version, unit_id)
) STRICT, WITHOUT ROWID;

-- Per flag, the unit's estimates carrying it: the key lists a flag's units by ID.
CREATE TABLE fleet_unit_flags (
    family    TEXT    NOT NULL,
    version   INTEGER NOT NULL,
    flag      TEXT    NOT NULL,
    unit_id   TEXT    NOT NULL,
    estimates INTEGER NOT NULL CHECK (estimates >= 1),
    PRIMARY KEY (family, version, flag, unit_id)
) STRICT, WITHOUT ROWID;

CREATE TABLE fleet_chi2_bins (
    family    TEXT    NOT NULL,
    version   INTEGER NOT NULL,
    bin       INTEGER NOT NULL,
    estimates INTEGER NOT NULL CHECK (estimates >= 1),
    low_value REAL    NOT NULL,
    PRIMARY KEY (family, version, bin)
) STRICT, WITHOUT ROWID;

CREATE TABLE fleet_rms_bins (
    family    TEXT    NOT NULL,
    version   INTEGER NOT NULL,
    channel   TEXT    NOT NULL,
    bin       INTEGER NOT NULL,
    estimates INTEGER NOT NULL CHECK (estimates >= 1),
    low_value REAL    NOT NULL,
    PRIMARY KEY (family, version, channel, bin)
) STRICT, WITHOUT ROWID;

-- The order statistics a quantile needs, read from its bin's low_value onwards.
CREATE INDEX estimates_by_model_chi2 ON estimates (family, version, chi2_per_dof);
CREATE INDEX estimate_channels_by_rms ON estimate_channels (family, version, channel, rms);

CREATE TRIGGER fleet_unit_traces_count AFTER INSERT ON traces
BEGIN
    INSERT INTO fleet_unit_traces (family, version, unit_id, traces) VALUES (NEW.family, NEW.version, NEW.unit_id, 1)
    ON CONFLICT (family, version, unit_id) DO UPDATE SET traces = fleet_unit_traces.traces + 1;
END;

-- Back-fill: the tables are new, so plain INSERT … SELECT with the totals so far.
INSERT INTO fleet_unit_estimates (family, version, unit_id, estimates)
SELECT family, version, unit_id, count(*) FROM estimates GROUP BY family, version, unit_id;

INSERT INTO fleet_unit_traces (family, version, unit_id, traces)
SELECT family, version, unit_id, count(*) FROM traces GROUP BY family, version, unit_id;

-- flags is comma-separated and no flag holds a comma or a quote: as a JSON array it splits
-- with json_each, one row per occurrence, as the summary counted them.
INSERT INTO fleet_unit_flags (family, version, flag, unit_id, estimates)
SELECT e.family, e.version, f.value, e.unit_id, count(*)
FROM estimates e, json_each('["' || replace(e.flags, ',', '","') || '"]') f
WHERE e.flags <> ''
GROUP BY e.family, e.version, f.value, e.unit_id;

INSERT INTO fleet_chi2_bins (family, version, bin, estimates, low_value)
SELECT family, version, bin, count(*), min(chi2_per_dof)
FROM (SELECT family, version, chi2_per_dof,
             CASE WHEN chi2_per_dof <= 0 THEN -1000000 WHEN chi2_per_dof > 1e300 THEN 1000000
                  ELSE CAST(floor(256 * ln(chi2_per_dof)) AS BIGINT) END AS bin
      FROM estimates WHERE chi2_per_dof IS NOT NULL)
GROUP BY family, version, bin;

INSERT INTO fleet_rms_bins (family, version, channel, bin, estimates, low_value)
SELECT family, version, channel, bin, count(*), min(rms)
FROM (SELECT family, version, channel, rms,
             CASE WHEN rms <= 0 THEN -1000000 WHEN rms > 1e300 THEN 1000000
                  ELSE CAST(floor(256 * ln(rms)) AS BIGINT) END AS bin
      FROM estimate_channels WHERE rms IS NOT NULL)
GROUP BY family, version, channel, bin;
