package backstate.store;

import javax.sql.DataSource;
import org.flywaydb.core.Flyway;
import org.flywaydb.core.api.FlywayException;

/**
 * Brings a database's schema up to date with the migrations shipped in the jar, one folder per
 * engine: types, triggers and JSON functions differ, so each has its own numbered history.
 */
final class Migrations {

    static final String SQLITE = "classpath:db/migration/sqlite";
    static final String POSTGRESQL = "classpath:db/migration/postgresql";

    private Migrations() {
    }

    /**
     * Migrates with Flyway, which takes a lock of its own on PostgreSQL (an advisory lock), so
     * replicas starting together migrate once and the others wait for it.
     */
    static void migrate(DataSource dataSource, String location) {
        try {
            Flyway.configure().dataSource(dataSource).locations(location).load().migrate();
        } catch (FlywayException e) {
            throw new StoreException("migrating the schema failed: " + e.getMessage(), e);
        }
    }
}
