-- Schema version 9 for SQLite (conventions as in V1; V7 and V8 are numbers kept for other work).
--
-- 1. An idempotency key remembers the request it was first used with. Its fingerprint is the
--    SHA-256 of the post (unit, model version, media type, CSV query options and the body after
--    decompression; api/TraceFingerprint). A retry with the same key and fingerprint replays the
--    first answer; the same key with another fingerprint is refused with 422, as the IETF draft
--    "The Idempotency-Key HTTP Header Field" (draft-ietf-httpapi-idempotency-key-header-07,
--    sections 2.4 and 2.7) describes. Keys stored before this migration have no fingerprint and
--    keep replaying, as they did. PostgreSQL: BYTEA with octet_length(fingerprint) = 32.
ALTER TABLE idempotency_keys ADD COLUMN fingerprint BLOB
    CHECK (fingerprint IS NULL OR length(fingerprint) = 32);

-- 2. A failed job may carry the failure's details as JSON, beside the text in errors: for an
--    estimate the data leave unobservable, the directions, by state name and component
--    ({"unobservableDirections": [...]}, formats/DocumentSolver). Only a failed job has them.
--    PostgreSQL: JSONB, with the same CHECK on state.
ALTER TABLE jobs ADD COLUMN failure_json TEXT
    CHECK (failure_json IS NULL OR (state = 'failed' AND json_valid(failure_json)));
