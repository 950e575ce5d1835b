package backstate.store;

import java.util.Arrays;
import java.util.List;
import java.util.stream.Collectors;
import java.util.stream.Stream;

/**
 * One table as {@link DatabaseCopy} copies and checks it: its columns with their kind of value,
 * and its primary key, the order rows are read back in on both engines. The list names every
 * column of the schema after SQLite V11 / PostgreSQL V1 (DatabaseCopyTableTest compares it with
 * both catalogues), so a later migration that adds a column fails that test until it is named here.
 */
record DatabaseCopyTable(String name, List<Column> columns, List<String> primaryKey) {

    /** A column and the kind of value it holds on both engines. */
    record Column(String name, DatabaseCopyValue kind) {
    }

    /** The tables copied, parents before the tables whose foreign keys point at them. */
    static final List<DatabaseCopyTable> COPIED = List.of(
            table("model_families", "name", "name:text description:text created_at:integer"),
            table("model_versions", "family version", "family:text version:integer status:text time_domain:text"
                    + " states:integer outputs:integer inputs:integer document_json:text observability_json:text"
                    + " created_at:integer"),
            table("traces", "id", "id:text unit_id:text family:text version:integer received_at:integer"
                    + " samples:integer window_start:real window_end:real payload:bytes"),
            table("jobs", "id", "id:text kind:text state:text trace_id:text params_json:text result_json:text"
                    + " attempt:integer created_at:integer started_at:integer finished_at:integer errors:json"
                    + " progress_done:integer progress_total:integer failure_json:text lease_expires_at:integer"),
            table("estimates", "id", "id:text job_id:text trace_id:text unit_id:text family:text version:integer"
                    + " created_at:integer window_start:real window_end:real chi2_per_dof:real flags:text"
                    + " summary_json:text received_at:integer"),
            table("estimate_states", "estimate_id state", "estimate_id:text state:text value:real"
                    + " standard_error:real lower:real upper:real"),
            table("estimate_channels", "family version channel window_start estimate_id", "family:text"
                    + " version:integer channel:text window_start:real estimate_id:text received_at:integer rms:real"),
            table("unit_latest", "family unit_id", "family:text unit_id:text version:integer estimate_id:text"
                    + " window_start:real window_end:real received_at:integer created_at:integer chi2_per_dof:real"
                    + " flags:text"),
            table("unit_version_latest", "family version unit_id", "family:text version:integer unit_id:text"
                    + " estimate_id:text window_start:real window_end:real received_at:integer created_at:integer"
                    + " chi2_per_dof:real flags:text"),
            table("idempotency_keys", "unit_id key", "unit_id:text key:text trace_id:text job_id:text"
                    + " created_at:integer fingerprint:bytes"),
            table("regressions", "job_id", "job_id:text family:text baseline:integer candidate:integer"
                    + " created_at:integer cancel_requested_at:integer"),
            table("api_keys", "id", "id:text role:text unit_pattern:text label:text salt:bytes hash:bytes"
                    + " created_at:integer created_by:text revoked_at:integer"));

    /**
     * Not copied: each engine's trigger counts the queued jobs as they are inserted. Checked like
     * the copied tables, so a count that went wrong shows.
     */
    static final DatabaseCopyTable QUEUE_LENGTH = table("queue_length", "id", "id:integer queued:integer");

    /**
     * Not copied: the fleet's running totals (SQLite V12, PostgreSQL V2), recomputed on the target
     * from the copied rows by fleet_totals_rebuild(), so its bins come from its own ln. Checked like
     * the copied tables: the same rows give the same totals.
     */
    static final List<DatabaseCopyTable> FLEET_TOTALS = List.of(
            table("fleet_unit_estimates", "family version unit_id", "family:text version:integer unit_id:text"
                    + " estimates:integer"),
            table("fleet_unit_traces", "family version unit_id", "family:text version:integer unit_id:text traces:integer"),
            table("fleet_unit_flags", "family version flag unit_id", "family:text version:integer flag:text unit_id:text"
                    + " estimates:integer"),
            table("fleet_chi2_bins", "family version bin", "family:text version:integer bin:integer estimates:integer"
                    + " low_value:real"),
            table("fleet_rms_bins", "family version channel bin", "family:text version:integer channel:text bin:integer"
                    + " estimates:integer low_value:real"));

    /** The copied tables, queue_length and the fleet totals: what the verification compares. */
    static List<DatabaseCopyTable> checked() {
        return Stream.of(COPIED.stream(), Stream.of(QUEUE_LENGTH), FLEET_TOTALS.stream()).flatMap(t -> t).toList();
    }

    /** Every row, every column in the order listed, in primary-key order as the engine sorts it. */
    String selectInKeyOrder(Dialect dialect) {
        return "SELECT " + columnList() + " FROM " + name + " ORDER BY " + primaryKey.stream()
                .map(key -> key + textOrder(dialect, key)).collect(Collectors.joining(", "));
    }

    /** Whether the table holds any row at all, without counting them. */
    String selectWhetherAnyRow() {
        return "SELECT EXISTS (SELECT 1 FROM " + name + ")";
    }

    /** One row's insert, a parameter per column in the order listed. */
    String insert() {
        return "INSERT INTO " + name + " (" + columnList() + ") VALUES ("
                + columns.stream().map(c -> c.kind().parameter()).collect(Collectors.joining(", ")) + ")";
    }

    /**
     * SQLite compares TEXT byte by byte (BINARY); PostgreSQL by the database's collation, which
     * orders e.g. "B" and "a" the other way round. COLLATE "C" is PostgreSQL's byte order, the
     * same as SQLite's for UTF-8, so both engines read rows back in the same order.
     */
    private String textOrder(Dialect dialect, String key) {
        boolean text = columns.stream().anyMatch(c -> c.name().equals(key) && c.kind() == DatabaseCopyValue.TEXT);
        return dialect == Dialect.POSTGRESQL && text ? " COLLATE \"C\"" : "";
    }

    private String columnList() {
        return columns.stream().map(Column::name).collect(Collectors.joining(", "));
    }

    /** A table from "name:kind" pairs separated by spaces, and its key columns separated by spaces. */
    private static DatabaseCopyTable table(String name, String primaryKey, String columns) {
        List<Column> parsed = Arrays.stream(columns.split(" ")).map(pair -> pair.split(":"))
                .map(pair -> new Column(pair[0], DatabaseCopyValue.named(pair[1]))).toList();
        return new DatabaseCopyTable(name, parsed, List.of(primaryKey.split(" ")));
    }
}
