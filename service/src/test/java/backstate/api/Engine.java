package backstate.api;

import backstate.store.PostgresServer;
import java.nio.file.Path;

/**
 * The two database engines the service runs on, for tests that must pass on both: each gives a
 * fresh, empty database of its own. SQLite is a file in the test's folder; PostgreSQL is a new
 * database on the per-JVM embedded server ({@link PostgresServer}), with the current schema.
 */
public enum Engine {
    SQLITE {
        @Override
        public TestDatabase newDatabase(Path folder, String name) {
            Path file = folder.resolve(name + ".db").toAbsolutePath();
            return new TestDatabase(this, file.toString(), "jdbc:sqlite:" + file);
        }
    },
    POSTGRESQL {
        @Override
        public TestDatabase newDatabase(Path folder, String name) {
            String jdbcUrl = PostgresServer.newDatabase();
            return new TestDatabase(this, PostgresServer.serviceUrl(jdbcUrl), jdbcUrl);
        }
    };

    /** A new empty database; {@code name} names the SQLite file in {@code folder} (PostgreSQL ignores both). */
    public abstract TestDatabase newDatabase(Path folder, String name);
}
