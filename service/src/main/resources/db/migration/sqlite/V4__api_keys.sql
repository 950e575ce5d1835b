-- Schema version 4 for SQLite: API keys (issue 5, access control).
--
-- A key is "bsk_<id>_<secret>". Only the id (the non-secret lookup handle) and a salted SHA-256
-- of the whole key are stored; the key itself is shown once when issued and never again.
-- Same conventions as V1: epoch-millisecond INTEGER timestamps, STRICT, explicit NOT NULL keys;
-- on PostgreSQL salt and hash are BYTEA and the length checks read octet_length(...).

CREATE TABLE api_keys (
    id           TEXT    NOT NULL PRIMARY KEY CHECK (length(id) = 16),
    role         TEXT    NOT NULL CHECK (role IN ('admin', 'gateway', 'reader')),
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

-- A key is immutable except its revocation, and a revoked key stays revoked (its time too).
-- (PostgreSQL needs trigger functions for the same rules; SQLite's RAISE works inline.)
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
