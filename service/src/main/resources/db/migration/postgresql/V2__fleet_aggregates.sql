-- Schema version 2 for PostgreSQL: running totals for the all-time fleet summary, the same
-- tables, meaning and back-fill as SQLite's V12__fleet_aggregates.sql (read it for the why).
--
-- Differences, and why:
-- * The trace counter is a trigger function, as every PostgreSQL trigger must be.
-- * flags splits with string_to_array/unnest; SQLite has no split and uses json_each.
-- * The back-fill is a function, fleet_totals_rebuild(), called once below and by DatabaseCopy
--   after it copies a SQLite file's rows here (SQLite has no copy into it, so no function there).
-- * ln() and floor() are built in here; SQLite's come from its math functions (3.35+). Both
--   engines compute bins with their own ln, in SQL only (SqlFleet.BIN_OF_VALUE is the same
--   text), so every bin of one database comes from one function and stays non-decreasing in v.
-- Replicas write concurrently: each counter is bumped with INSERT … ON CONFLICT DO UPDATE
-- SET n = n + 1, which takes the row's lock, so no increment is lost; keys are per unit (and
-- per 0.39 % value bin), so two transactions rarely wait on the same row.

CREATE TABLE fleet_unit_estimates (
    family    TEXT COLLATE "C" NOT NULL,
    version   INTEGER NOT NULL,
    unit_id   TEXT COLLATE "C" NOT NULL,
    estimates BIGINT  NOT NULL CHECK (estimates >= 1),
    PRIMARY KEY (family, version, unit_id)
);

CREATE TABLE fleet_unit_traces (
    family  TEXT COLLATE "C" NOT NULL,
    version INTEGER NOT NULL,
    unit_id TEXT COLLATE "C" NOT NULL,
    traces  BIGINT  NOT NULL CHECK (traces >= 1),
    PRIMARY KEY (family, version, unit_id)
);

CREATE TABLE fleet_unit_flags (
    family    TEXT COLLATE "C" NOT NULL,
    version   INTEGER NOT NULL,
    flag      TEXT COLLATE "C" NOT NULL,
    unit_id   TEXT COLLATE "C" NOT NULL,
    estimates BIGINT  NOT NULL CHECK (estimates >= 1),
    PRIMARY KEY (family, version, flag, unit_id)
);

CREATE TABLE fleet_chi2_bins (
    family    TEXT COLLATE "C" NOT NULL,
    version   INTEGER          NOT NULL,
    bin       BIGINT           NOT NULL,
    estimates BIGINT           NOT NULL CHECK (estimates >= 1),
    low_value DOUBLE PRECISION NOT NULL,
    PRIMARY KEY (family, version, bin)
);

CREATE TABLE fleet_rms_bins (
    family    TEXT COLLATE "C" NOT NULL,
    version   INTEGER          NOT NULL,
    channel   TEXT COLLATE "C" NOT NULL,
    bin       BIGINT           NOT NULL,
    estimates BIGINT           NOT NULL CHECK (estimates >= 1),
    low_value DOUBLE PRECISION NOT NULL,
    PRIMARY KEY (family, version, channel, bin)
);

CREATE INDEX estimates_by_model_chi2 ON estimates (family, version, chi2_per_dof);
CREATE INDEX estimate_channels_by_rms ON estimate_channels (family, version, channel, rms);

CREATE FUNCTION fleet_unit_traces_count() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    INSERT INTO fleet_unit_traces (family, version, unit_id, traces) VALUES (NEW.family, NEW.version, NEW.unit_id, 1)
    ON CONFLICT (family, version, unit_id) DO UPDATE SET traces = fleet_unit_traces.traces + 1;
    RETURN NULL;
END $$;

CREATE TRIGGER fleet_unit_traces_count AFTER INSERT ON traces
    FOR EACH ROW EXECUTE FUNCTION fleet_unit_traces_count();

-- The totals recomputed from the rows: the back-fill below, and DatabaseCopy after it has copied
-- a SQLite file's rows into this database (the bins are computed again with this engine's ln, so
-- the rows written later land in the same bins as the copied ones).
CREATE FUNCTION fleet_totals_rebuild() RETURNS void LANGUAGE plpgsql AS $$
BEGIN
    DELETE FROM fleet_unit_estimates;
    DELETE FROM fleet_unit_traces;
    DELETE FROM fleet_unit_flags;
    DELETE FROM fleet_chi2_bins;
    DELETE FROM fleet_rms_bins;
    INSERT INTO fleet_unit_estimates (family, version, unit_id, estimates)
    SELECT family, version, unit_id, count(*) FROM estimates GROUP BY family, version, unit_id;

    INSERT INTO fleet_unit_traces (family, version, unit_id, traces)
    SELECT family, version, unit_id, count(*) FROM traces GROUP BY family, version, unit_id;

    INSERT INTO fleet_unit_flags (family, version, flag, unit_id, estimates)
    SELECT e.family, e.version, f.flag, e.unit_id, count(*)
    FROM estimates e, unnest(string_to_array(e.flags, ',')) AS f (flag)
    WHERE e.flags <> ''
    GROUP BY e.family, e.version, f.flag, e.unit_id;

    INSERT INTO fleet_chi2_bins (family, version, bin, estimates, low_value)
    SELECT family, version, bin, count(*), min(chi2_per_dof)
    FROM (SELECT family, version, chi2_per_dof,
                 CASE WHEN chi2_per_dof <= 0 THEN -1000000 WHEN chi2_per_dof > 1e300 THEN 1000000
                      ELSE CAST(floor(256 * ln(chi2_per_dof)) AS BIGINT) END AS bin
          FROM estimates WHERE chi2_per_dof IS NOT NULL) v
    GROUP BY family, version, bin;

    INSERT INTO fleet_rms_bins (family, version, channel, bin, estimates, low_value)
    SELECT family, version, channel, bin, count(*), min(rms)
    FROM (SELECT family, version, channel, rms,
                 CASE WHEN rms <= 0 THEN -1000000 WHEN rms > 1e300 THEN 1000000
                      ELSE CAST(floor(256 * ln(rms)) AS BIGINT) END AS bin
          FROM estimate_channels WHERE rms IS NOT NULL) v
    GROUP BY family, version, channel, bin;
END $$;

SELECT fleet_totals_rebuild();
