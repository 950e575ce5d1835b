package backstate.reliability;

import backstate.api.Engine;
import backstate.api.TestDatabase;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;

/**
 * Reads a server's database from outside the server, as SQLite's own crash tests do: a fresh
 * connection per question, so nothing cached in the server can hide what is stored. Works on a
 * SQLite file or a PostgreSQL database; the integrity checks are each engine's own.
 */
final class ServerDb {
    /** Tables whose row counts make up the content signature. */
    private static final List<String> SIGNED_TABLES =
            List.of("model_families", "model_versions", "traces", "jobs", "estimates", "idempotency_keys");
    /**
     * PostgreSQL's foreign keys, one row each: child table, parent table, the join condition and
     * the child columns' presence, from the catalogue (PostgreSQL manual, "pg_constraint").
     */
    private static final String POSTGRES_FOREIGN_KEYS = "SELECT c.conrelid::regclass::text, c.confrelid::regclass::text,"
            + " string_agg(format('p.%I = t.%I', pa.attname, ca.attname), ' AND ' ORDER BY k.n),"
            + " string_agg(format('t.%I IS NOT NULL', ca.attname), ' AND ' ORDER BY k.n)"
            + " FROM pg_constraint c CROSS JOIN LATERAL unnest(c.conkey, c.confkey) WITH ORDINALITY AS k(child, parent, n)"
            + " JOIN pg_attribute ca ON ca.attrelid = c.conrelid AND ca.attnum = k.child"
            + " JOIN pg_attribute pa ON pa.attrelid = c.confrelid AND pa.attnum = k.parent"
            + " WHERE c.contype = 'f' AND c.connamespace = 'public'::regnamespace GROUP BY c.oid, c.conrelid, c.confrelid";
    /** Every B-tree index of the schema checked against its table by amcheck (PostgreSQL manual, F.2 amcheck). */
    private static final String POSTGRES_INDEX_CHECK = "SELECT c.relname, bt_index_check(i.indexrelid, true) FROM pg_index i"
            + " JOIN pg_class c ON c.oid = i.indexrelid JOIN pg_am am ON am.oid = c.relam"
            + " WHERE am.amname = 'btree' AND c.relnamespace = 'public'::regnamespace";

    private final TestDatabase database;

    ServerDb(Path file) {
        this(new TestDatabase(Engine.SQLITE, file.toString(), "jdbc:sqlite:" + file.toAbsolutePath()));
    }

    ServerDb(TestDatabase database) {
        this.database = database;
    }

    /** The SQLite file (SQLite only). */
    Path file() {
        if (database.engine() != Engine.SQLITE) {
            throw new IllegalStateException("a " + database.engine() + " database has no file");
        }
        return Path.of(database.serviceValue());
    }

    TestDatabase database() {
        return database;
    }

    long count(String sql) {
        List<String> rows = strings(sql);
        return rows.isEmpty() ? -1 : Long.parseLong(rows.get(0));
    }

    /** Row counts of the content tables plus the jobs by state, as one comparable string (one connection). */
    /**
     * Polls every {@code poll} until no job is queued or running; false if some still were after
     * {@code bound} (the caller says what that means for it).
     */
    boolean awaitDrained(Duration bound, Duration poll) throws InterruptedException {
        long deadline = System.nanoTime() + bound.toNanos();
        while (count("SELECT COUNT(*) FROM jobs WHERE state IN ('queued', 'running')") > 0) {
            if (System.nanoTime() > deadline) {
                return false;
            }
            Thread.sleep(poll.toMillis());
        }
        return true;
    }

    String signature() {
        try (Connection c = database.connect(); Statement s = c.createStatement()) {
            StringBuilder out = new StringBuilder();
            for (String table : SIGNED_TABLES) {
                out.append(table).append('=').append(column(s, "SELECT COUNT(*) FROM " + table).get(0)).append(' ');
            }
            return out.append("jobStates=")
                    .append(column(s, "SELECT state || ':' || COUNT(*) FROM jobs GROUP BY state ORDER BY state")).toString();
        } catch (SQLException e) {
            throw new AssertionError("reading " + database.jdbcUrl(), e);
        }
    }

    /**
     * "ok", or the problems found: SQLite's {@code PRAGMA integrity_check}; on PostgreSQL, amcheck's
     * {@code bt_index_check} with every table row looked up in each of its B-tree indexes.
     */
    String integrityCheck() {
        if (database.engine() == Engine.SQLITE) {
            return String.join("; ", strings("PRAGMA integrity_check"));
        }
        try (Connection c = database.connect(); Statement s = c.createStatement()) {
            s.execute("CREATE EXTENSION IF NOT EXISTS amcheck");
            column(s, POSTGRES_INDEX_CHECK);
            return "ok";
        } catch (SQLException e) {
            return e.getMessage();
        }
    }

    /** Rows that break a foreign key; empty when every reference holds. */
    List<String> foreignKeyViolations() {
        if (database.engine() == Engine.SQLITE) {
            return strings("SELECT \"table\" || ' rowid ' || rowid || ' -> ' || parent FROM pragma_foreign_key_check");
        }
        List<String> violations = new ArrayList<>();
        try (Connection c = database.connect(); Statement s = c.createStatement()) {
            List<String[]> keys = new ArrayList<>();
            try (ResultSet r = s.executeQuery(POSTGRES_FOREIGN_KEYS)) {
                while (r.next()) {
                    keys.add(new String[] {r.getString(1), r.getString(2), r.getString(3), r.getString(4)});
                }
            }
            for (String[] k : keys) {
                violations.addAll(column(s, "SELECT '" + k[0] + " ctid ' || t.ctid || ' -> " + k[1] + "' FROM " + k[0]
                        + " t WHERE " + k[3] + " AND NOT EXISTS (SELECT 1 FROM " + k[1] + " p WHERE " + k[2] + ")"));
            }
            return violations;
        } catch (SQLException e) {
            throw new AssertionError("checking foreign keys of " + database.jdbcUrl(), e);
        }
    }

    /** The first column of every row, as text. */
    List<String> strings(String sql) {
        try (Connection c = database.connect(); Statement s = c.createStatement()) {
            return column(s, sql);
        } catch (SQLException e) {
            throw new AssertionError("reading " + database.jdbcUrl() + ": " + sql, e);
        }
    }

    private static List<String> column(Statement s, String sql) throws SQLException {
        try (ResultSet r = s.executeQuery(sql)) {
            List<String> out = new ArrayList<>();
            while (r.next()) {
                out.add(r.getString(1));
            }
            return out;
        }
    }
}
