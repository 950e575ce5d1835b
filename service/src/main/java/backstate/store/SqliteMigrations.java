package backstate.store;

import javax.sql.DataSource;
import org.flywaydb.core.Flyway;
import org.flywaydb.core.api.FlywayException;

/** Brings a SQLite file's schema up to date with the migrations shipped in the jar. */
final class SqliteMigrations {

    /** SQLite's own folder: PostgreSQL's types and triggers differ, so it will have its own. */
    static final String LOCATION = "classpath:db/migration/sqlite";

    private SqliteMigrations() {
    }

    static void migrate(DataSource dataSource) {
        try {
            Flyway.configure().dataSource(dataSource).locations(LOCATION).load().migrate();
        } catch (FlywayException e) {
            throw new StoreException("migrating the schema failed: " + e.getMessage(), e);
        }
    }
}
