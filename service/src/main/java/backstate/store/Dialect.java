package backstate.store;

/**
 * The few SQL fragments that differ between SQLite and PostgreSQL; everything else the aggregate
 * classes write runs unchanged on both (ON CONFLICT, RETURNING, row values, window functions).
 * A bare {@code ? IS NULL} is written {@code CAST(? AS TEXT) IS NULL} on both, since PostgreSQL
 * cannot infer a parameter's type from IS NULL alone.
 */
enum Dialect {

    /** SQLite 3.35+ with JSON1. */
    SQLITE(
            "json_insert(COALESCE(errors, '[]'), '$[#]', 'attempt ' || attempt || ': ' || ?)",
            "SELECT value FROM json_each(?)",
            "json_extract(j.result_json, '$.verdict.pass')",
            // SQLite has one writer, so the inner SELECT cannot race another claimer.
            "id IN (SELECT id FROM jobs WHERE state = 'queued' ORDER BY created_at, id LIMIT ?)",
            // SQLite has one writer: no other transaction can change the rows read.
            ""),
    /** PostgreSQL 14+; jobs.errors is JSONB there, the other JSON columns TEXT as on SQLite. */
    POSTGRESQL(
            "COALESCE(errors, '[]'::jsonb) || to_jsonb('attempt ' || attempt || ': ' || CAST(? AS TEXT))",
            "SELECT json_array_elements_text(CAST(? AS json))",
            "CASE CAST(j.result_json AS jsonb) -> 'verdict' ->> 'pass' WHEN 'true' THEN 1 WHEN 'false' THEN 0 END",
            // Replicas claim concurrently: a row another claimer has locked is skipped, not waited
            // for. ARRAY(...) runs the locking SELECT once, as an init plan, whatever the planner
            // would do with an IN subquery.
            "id = ANY(ARRAY(SELECT id FROM jobs WHERE state = 'queued' ORDER BY created_at, id LIMIT ?"
                    + " FOR UPDATE SKIP LOCKED))",
            // READ COMMITTED lets another transaction change a row between this read and the write
            // that depends on it; the row lock makes it wait, and re-read the row, instead.
            " FOR UPDATE");

    private final String appendError;
    private final String unitsOfJsonArray;
    private final String verdictPass;
    private final String jobsToClaim;
    private final String lockRowsRead;

    Dialect(String appendError, String unitsOfJsonArray, String verdictPass, String jobsToClaim, String lockRowsRead) {
        this.appendError = appendError;
        this.unitsOfJsonArray = unitsOfJsonArray;
        this.verdictPass = verdictPass;
        this.jobsToClaim = jobsToClaim;
        this.lockRowsRead = lockRowsRead;
    }

    /** jobs.errors with "attempt N: &lt;bound message&gt;" appended to its JSON array. */
    String appendError() {
        return appendError;
    }

    /** A subquery yielding the strings of one bound JSON array. */
    String unitsOfJsonArray() {
        return unitsOfJsonArray;
    }

    /** A regression job's verdict as 1, 0 or NULL. */
    String verdictPass() {
        return verdictPass;
    }

    /**
     * The claim's WHERE condition: the oldest queued jobs, at most one bound limit of them, never
     * a job another claimer is taking at the same moment.
     */
    String jobsToClaim() {
        return jobsToClaim;
    }

    /**
     * Appended to a SELECT in a write transaction whose later writes depend on the rows it read:
     * those rows stay as read until the commit.
     */
    String lockRowsRead() {
        return lockRowsRead;
    }
}
