package backstate.store;

import javax.sql.DataSource;
import org.flywaydb.core.Flyway;
import org.flywaydb.core.api.FlywayException;
import org.flywaydb.core.api.MigrationInfo;
import org.flywaydb.core.api.MigrationInfoService;
import org.flywaydb.core.api.MigrationVersion;

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
            Flyway flyway = Flyway.configure().dataSource(dataSource).locations(location).load();
            refuseNewerSchema(flyway.info());
            flyway.migrate();
        } catch (FlywayException e) {
            throw new StoreException("migrating the schema failed: " + e.getMessage(), e);
        }
    }

    /**
     * A database another, newer build migrated past the migrations this jar ships: Flyway would
     * only warn and go on, and this build would then write rows the newer schema does not expect.
     */
    private static void refuseNewerSchema(MigrationInfoService info) {
        MigrationInfo current = info.current();
        MigrationVersion shipped = MigrationVersion.EMPTY;
        for (MigrationInfo m : info.all()) {
            if (m.getState().isResolved() && m.getVersion() != null && m.getVersion().compareTo(shipped) > 0) {
                shipped = m.getVersion();
            }
        }
        if (current != null && current.getVersion() != null && current.getVersion().compareTo(shipped) > 0) {
            throw new StoreException("the schema is at version " + current.getVersion() + ", newer than this build's"
                    + " latest " + shipped + "; run the newer build, or restore a copy made before it migrated", null);
        }
    }
}
