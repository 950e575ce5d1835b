package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * PostgreSQL's schema version 1 is SQLite's schema after its version 11: the same tables with the
 * same columns in the same order, and the same secondary indexes, as each engine's own catalogue
 * reports them (SQLite's pragma_table_info, PostgreSQL's information_schema); and its text sorts
 * as SQLite's does.
 */
class PostgresSchemaTest {

    @TempDir
    Path dir;

    @Test
    void postgresql_has_sqlites_tables_columns_and_indexes() throws SQLException {
        try (StoreFixture sqlite = new StoreFixture(dir, Backend.SQLITE);
             StoreFixture postgres = new StoreFixture(dir, Backend.POSTGRESQL)) {
            Map<String, List<String>> expected = columnsByTable(sqlite, "SELECT m.name, p.name FROM sqlite_schema m"
                    + " JOIN pragma_table_info(m.name) p WHERE m.type = 'table' AND m.name NOT LIKE 'sqlite_%'"
                    + " AND m.name NOT LIKE 'flyway_%' ORDER BY m.name, p.cid");
            assertEquals(expected, columnsByTable(postgres, "SELECT table_name, column_name FROM information_schema.columns"
                    + " WHERE table_schema = 'public' AND table_name NOT LIKE 'flyway_%' ORDER BY table_name, ordinal_position"));
            assertTrue(expected.size() >= 12, expected.keySet().toString());
            List<String> indexes = strings(sqlite, "SELECT name FROM sqlite_schema WHERE type = 'index'"
                    + " AND name NOT LIKE 'sqlite_%' ORDER BY name");
            // PostgreSQL also lists the indexes behind primary keys and UNIQUE, which SQLite names sqlite_autoindex_*.
            assertEquals(indexes, strings(postgres, "SELECT c.relname FROM pg_index i JOIN pg_class c ON c.oid = i.indexrelid"
                    + " JOIN pg_namespace n ON n.oid = c.relnamespace WHERE n.nspname = 'public' AND NOT i.indisprimary"
                    + " AND NOT i.indisunique ORDER BY c.relname"));
        }
    }

    /** Text compares byte by byte, as SQLite's BINARY collation does, whatever the database's default. */
    @Test
    void every_text_column_collates_bytewise() throws SQLException {
        try (StoreFixture postgres = new StoreFixture(dir, Backend.POSTGRESQL)) {
            assertEquals(List.of(), strings(postgres, "SELECT table_name || '.' || column_name FROM information_schema.columns"
                    + " WHERE table_schema = 'public' AND data_type = 'text' AND table_name NOT LIKE 'flyway_%'"
                    + " AND collation_name IS DISTINCT FROM 'C' ORDER BY 1"));
            for (String family : List.of("unit_a", "unit-B", "Unit-c", "UNIT-A")) {
                postgres.store.models().createFamily(family, "", StoreFixture.T0);
            }
            assertEquals(List.of("UNIT-A", "Unit-c", "pump", "unit-B", "unit_a"),
                    postgres.store.models().listFamilies().stream().map(FamilyRow::name).toList(),
                    "byte order: upper case before lower, '-' (0x2D) before '_' (0x5F)");
        }
    }

    private static Map<String, List<String>> columnsByTable(StoreFixture fx, String sql) throws SQLException {
        Map<String, List<String>> columns = new TreeMap<>();
        try (Connection c = fx.raw(); Statement s = c.createStatement(); ResultSet rs = s.executeQuery(sql)) {
            while (rs.next()) {
                columns.computeIfAbsent(rs.getString(1), t -> new ArrayList<>()).add(rs.getString(2));
            }
        }
        return columns;
    }

    private static List<String> strings(StoreFixture fx, String sql) throws SQLException {
        List<String> out = new ArrayList<>();
        try (Connection c = fx.raw(); Statement s = c.createStatement(); ResultSet rs = s.executeQuery(sql)) {
            while (rs.next()) {
                out.add(rs.getString(1));
            }
        }
        return out;
    }
}
