-- Schema version 8 for SQLite: a fourth key role, 'pipeline', for CI: it may start regression
-- runs and read, nothing else (backstate.auth.Role, backstate.api.Access). Version 7 is taken by
-- another change.
--
-- SQLite cannot alter a CHECK constraint, so api_keys is rebuilt the way its documentation
-- describes (https://sqlite.org/lang_altertable.html, "Making Other Kinds Of Table Schema
-- Changes"): create the new table, copy every row, drop the old one, rename, and create its
-- triggers again (dropping a table drops its triggers; the table has no other index than its
-- primary key, and no foreign key points at it). Flyway runs this in one transaction.
-- PostgreSQL would drop and add the named CHECK constraint instead.

CREATE TABLE api_keys_v8 (
    id           TEXT    NOT NULL PRIMARY KEY CHECK (length(id) = 16),
    role         TEXT    NOT NULL CHECK (role IN ('admin', 'gateway', 'reader', 'pipeline')),
    -- A glob over unit IDs; exactly the gateway keys have one.
    unit_pattern TEXT,
    label        TEXT    NOT NULL,
    salt         BLOB    NOT NULL CHECK (length(salt) = 16),
    hash         BLOB    NOT NULL CHECK (length(hash) = 32),
    created_at   INTEGER NOT NULL,
    -- The admin key that issued this one; NULL for the first admin key and with access control off.
    created_by   TEXT,
    revoked_at   INTEGER,
    CHECK ((role = 'gateway') = (unit_pattern IS NOT NULL)),
    CHECK (revoked_at IS NULL OR revoked_at >= created_at)
) STRICT;

INSERT INTO api_keys_v8 (id, role, unit_pattern, label, salt, hash, created_at, created_by, revoked_at)
SELECT id, role, unit_pattern, label, salt, hash, created_at, created_by, revoked_at FROM api_keys;

DROP TABLE api_keys;

ALTER TABLE api_keys_v8 RENAME TO api_keys;

-- As in V4: a key is immutable except its revocation, and a revoked key stays revoked.
CREATE TRIGGER api_keys_are_immutable
BEFORE UPDATE OF id, role, unit_pattern, label, salt, hash, created_at, created_by ON api_keys
BEGIN
    SELECT RAISE(ABORT, 'API keys are immutable except their revocation');
END;

CREATE TRIGGER api_keys_stay_revoked
BEFORE UPDATE OF revoked_at ON api_keys
WHEN OLD.revoked_at IS NOT NULL
BEGIN
    SELECT RAISE(ABORT, 'a revoked API key stays revoked');
END;
