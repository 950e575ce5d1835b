package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.ByteBuffer;
import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.HexFormat;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import java.util.stream.Collectors;
import org.junit.jupiter.api.Test;

/**
 * The copy and its verifier against the two engines themselves: their catalogues for the tables
 * and columns, PostgreSQL's JSONB for the canonical JSON, the JDK's SHA-256 for the checksum, and
 * values changed behind the store's back for the verifier's findings.
 */
class DatabaseCopyTest extends StoreTestBase {

    private static final String BYTE_ORDER_UNLIKE_ICU = "en-US-x-icu";

    @Test
    void every_table_and_column_of_both_schemas_is_copied_or_checked_with_its_primary_key() throws Exception {
        Map<String, List<String>> listed = new TreeMap<>();
        DatabaseCopyTable.checked().forEach(t -> listed.put(t.name(),
                t.columns().stream().map(DatabaseCopyTable.Column::name).sorted().toList()));
        Map<String, List<String>> keys = new TreeMap<>();
        DatabaseCopyTable.checked().forEach(t -> keys.put(t.name(), t.primaryKey()));
        try (Connection c = fx.raw()) {
            assertEquals(listed, catalogue(c, "SELECT m.name, p.name FROM sqlite_master m, pragma_table_info(m.name) p"
                    + " WHERE m.type = 'table' AND m.name NOT LIKE 'sqlite%' AND m.name <> 'flyway_schema_history'"));
            assertEquals(keys, keyColumns(catalogue(c, "SELECT m.name, p.pk || ':' || p.name FROM sqlite_master m,"
                    + " pragma_table_info(m.name) p WHERE m.type = 'table' AND p.pk > 0"
                    + " AND m.name NOT LIKE 'sqlite%' AND m.name <> 'flyway_schema_history'")));
        }
        try (Connection c = PostgresServer.connect(PostgresServer.newDatabase())) {
            assertEquals(listed, catalogue(c, "SELECT table_name, column_name FROM information_schema.columns"
                    + " WHERE table_schema = 'public' AND table_name <> 'flyway_schema_history'"));
            assertEquals(keys, keyColumns(catalogue(c, "SELECT k.table_name, k.ordinal_position || ':' || k.column_name"
                    + " FROM information_schema.key_column_usage k JOIN information_schema.table_constraints t"
                    + " ON t.constraint_name = k.constraint_name AND t.table_name = k.table_name"
                    + " WHERE t.constraint_type = 'PRIMARY KEY' AND k.table_schema = 'public'"
                    + " AND k.table_name <> 'flyway_schema_history'")));
        }
    }

    @Test
    void the_verifier_names_each_table_changed_behind_the_stores_back_and_only_those() throws Exception {
        DatabaseCopyFixture.fill(store);
        fx.close();
        String target = PostgresServer.newEmptyDatabase();
        PostgresSettings settings = PostgresServer.settings(target);
        assertTrue(DatabaseCopy.copy(fx.file, settings, fx.clock, line -> { }).verified());
        try (Connection c = PostgresServer.connect(target)) {
            // One bit: the next double after an estimate's χ²/dof.
            double chi2 = first(c, "SELECT chi2_per_dof FROM estimates WHERE chi2_per_dof IS NOT NULL ORDER BY id LIMIT 1");
            update(c, "UPDATE estimates SET chi2_per_dof = ? WHERE chi2_per_dof = ?", Math.nextUp(chi2), chi2);
            update(c, "DELETE FROM api_keys WHERE id = ?", "readerkey0000003");
        }
        Map<String, DatabaseCopyCheck> checks = DatabaseCopy.verify(fx.file, settings).stream()
                .collect(Collectors.toMap(DatabaseCopyCheck::table, c -> c, (a, b) -> a, LinkedHashMap::new));
        assertEquals(List.of("estimates", "api_keys"), checks.values().stream().filter(c -> !c.matches())
                .map(DatabaseCopyCheck::table).toList());
        assertEquals(List.of(6L, 6L), List.of(checks.get("estimates").sourceRows(), checks.get("estimates").targetRows()));
        assertFalse(checks.get("estimates").sourceChecksum().equals(checks.get("estimates").targetChecksum()));
        assertEquals(List.of(3L, 2L), List.of(checks.get("api_keys").sourceRows(), checks.get("api_keys").targetRows()));
    }

    @Test
    void a_table_of_several_batches_is_copied_whole_with_its_last_partial_batch() throws Exception {
        int traces = 2 * DatabaseCopy.BATCH_ROWS + 7;
        try (Connection c = fx.raw(); PreparedStatement ps = c.prepareStatement("INSERT INTO traces (id, unit_id, family,"
                + " version, received_at, samples, window_start, window_end, payload) VALUES (?, ?, 'pump', 1, ?, 3, ?, ?, ?)")) {
            c.setAutoCommit(false);
            for (int i = 0; i < traces; i++) {
                Sql.bind(ps, String.format("t%05d", i), "unit-" + i % 17, StoreFixture.T0.toEpochMilli() + i, i / 3.0,
                        i / 3.0 + 2, new byte[] {(byte) i, (byte) (i >> 8)});
                ps.addBatch();
            }
            ps.executeBatch();
            c.commit();
        }
        fx.close();
        List<String> progress = new ArrayList<>();
        DatabaseCopy.Result result = DatabaseCopy.copy(fx.file, PostgresServer.settings(PostgresServer.newEmptyDatabase()),
                fx.clock, progress::add);
        assertTrue(result.verified(), result.checks().toString());
        assertTrue(progress.contains("copied traces: " + traces + " rows"), progress.toString());
        assertEquals(traces, result.checks().get(2).targetRows());
    }

    @Test
    void a_copy_postgresql_rejects_half_way_leaves_the_target_empty() throws Exception {
        // PostgreSQL's TEXT cannot hold the NUL character SQLite's can; api_keys is copied last.
        assertTrue(store.keys().insertApiKey(new NewApiKey("nulkey0000000001", "admin", null, "a\u0000b", new byte[16],
                new byte[32], null), StoreFixture.T0));
        fx.close();
        String target = PostgresServer.newEmptyDatabase();
        StoreException e = assertThrows(StoreException.class,
                () -> DatabaseCopy.copy(fx.file, PostgresServer.settings(target), fx.clock, line -> { }));
        assertTrue(e.getMessage().startsWith("copying failed: table api_keys: ERROR: invalid byte sequence for encoding"),
                e.getMessage());
        try (Connection c = PostgresServer.connect(target)) {
            for (DatabaseCopyTable table : DatabaseCopyTable.COPIED) {
                assertEquals(0.0, first(c, "SELECT count(*) FROM " + table.name()), table.name());
            }
        }
    }

    @Test
    void the_checksums_agree_on_a_target_that_sorts_text_unlike_byte_order() throws Exception {
        DatabaseCopyFixture.fill(store);
        fx.close();
        String target = PostgresServer.newDatabase();
        try (Connection c = PostgresServer.connect(target)) {
            // ICU's English order puts "unit-a" before "Unit-B"; byte order (SQLite) the other way round.
            assertEquals(List.of(1.0, 0.0), List.of(
                    first(c, "SELECT CAST('unit-a' < 'Unit-B' COLLATE \"" + BYTE_ORDER_UNLIKE_ICU + "\" AS int)"),
                    first(c, "SELECT CAST('unit-a' < 'Unit-B' COLLATE \"C\" AS int)")));
            update(c, "ALTER TABLE unit_latest ALTER COLUMN unit_id TYPE TEXT COLLATE \"" + BYTE_ORDER_UNLIKE_ICU + "\"");
        }
        DatabaseCopy.Result result = DatabaseCopy.copy(fx.file, PostgresServer.settings(target), fx.clock, line -> { });
        assertTrue(result.verified(), result.checks().toString());
    }

    @Test
    void canonical_json_is_the_same_for_a_text_and_what_postgresql_gives_back_from_jsonb() throws Exception {
        List<String> documents = List.of("[ \"attempt 1: a\" ,\"attempt 2: \\u00fc \\\"q\\\"\"]",
                "{\"b\": 1.50, \"a\": [1e2, -0.0, 10], \"c\": {\"z\": null, \"y\": true}}", "[ ]");
        try (Connection c = PostgresServer.connect(PostgresServer.newEmptyDatabase());
             PreparedStatement ps = c.prepareStatement("SELECT CAST(CAST(? AS jsonb) AS text)")) {
            for (String document : documents) {
                ps.setString(1, document);
                try (ResultSet rs = ps.executeQuery()) {
                    rs.next();
                    String stored = rs.getString(1);
                    assertFalse(stored.equals(document), "JSONB rewrites " + document);
                    assertEquals(DatabaseCopyValue.canonicalJson(document), DatabaseCopyValue.canonicalJson(stored));
                }
            }
        }
        assertEquals("{\"a\":[100,0,10],\"b\":1.5}", DatabaseCopyValue.canonicalJson("{\"b\":1.50,\"a\":[1E+2,-0,10.0]}"));
    }

    @Test
    void the_checksum_of_a_table_is_the_sha256_of_its_documented_encoding() throws Exception {
        // model_families holds the fixture's one row: ("pump", "test pumps", T0 in epoch ms).
        MessageDigest expected = MessageDigest.getInstance("SHA-256");
        for (String text : List.of("pump", "test pumps")) {
            byte[] utf8 = text.getBytes(StandardCharsets.UTF_8);
            expected.update((byte) 1);
            expected.update(ByteBuffer.allocate(4).putInt(utf8.length).array());
            expected.update(utf8);
        }
        expected.update((byte) 1);
        expected.update(ByteBuffer.allocate(8).putLong(StoreFixture.T0.toEpochMilli()).array());
        try (Connection c = fx.raw()) {
            DatabaseCopyChecksum.Sum sum = DatabaseCopyChecksum.of(c, DatabaseCopyTable.COPIED.get(0), Dialect.SQLITE);
            assertEquals(new DatabaseCopyChecksum.Sum(1, HexFormat.of().formatHex(expected.digest())), sum);
        }
    }

    /** Table name to its sorted second-column values. */
    private static Map<String, List<String>> catalogue(Connection c, String sql) throws SQLException {
        Map<String, List<String>> tables = new TreeMap<>();
        try (Statement s = c.createStatement(); ResultSet rs = s.executeQuery(sql)) {
            while (rs.next()) {
                tables.computeIfAbsent(rs.getString(1), t -> new ArrayList<>()).add(rs.getString(2));
            }
        }
        tables.values().forEach(columns -> columns.sort(null));
        return tables;
    }

    /** "position:column" values, sorted by position, as column names. */
    private static Map<String, List<String>> keyColumns(Map<String, List<String>> positioned) {
        Map<String, List<String>> keys = new TreeMap<>();
        positioned.forEach((table, columns) -> keys.put(table, columns.stream()
                .sorted(java.util.Comparator.comparingInt(p -> Integer.parseInt(p.substring(0, p.indexOf(':')))))
                .map(p -> p.substring(p.indexOf(':') + 1)).toList()));
        return keys;
    }

    private static double first(Connection c, String sql) throws SQLException {
        try (Statement s = c.createStatement(); ResultSet rs = s.executeQuery(sql)) {
            rs.next();
            return rs.getDouble(1);
        }
    }

    private static void update(Connection c, String sql, Object... values) throws SQLException {
        try (PreparedStatement ps = Sql.bind(c.prepareStatement(sql), values)) {
            ps.executeUpdate();
        }
    }
}
