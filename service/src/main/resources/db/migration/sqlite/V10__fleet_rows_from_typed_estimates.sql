-- Schema version 10 for SQLite: the fleet tables (estimate_states, estimate_channels) are written
-- by SqliteFleet.recordEstimate from the estimate's typed figures (jobs.NewEstimate, taken from
-- formats.EstimateDocument), in the transaction that writes the estimate. The views that pulled
-- the same figures out of the stored JSON served only that write and the backfills of V2 and V7,
-- which ran before this migration; they go, so no SQL depends on the document's JSON layout.
DROP VIEW estimate_document_states;
DROP VIEW estimate_document_channels;
