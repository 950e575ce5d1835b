package backstate.config;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import java.util.Optional;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The database setting: a SQLite path, or a PostgreSQL URL whose password never comes from the URL. */
class DatabaseTargetTest {

    @TempDir
    Path dir;

    @Test
    void a_plain_path_is_a_sqlite_file() {
        assertEquals(new DatabaseTarget.SqliteFile(Path.of("data/backstate.db")),
                DatabaseTarget.parse("data/backstate.db", Map.of()));
    }

    @Test
    void a_postgresql_url_becomes_a_jdbc_url_with_the_default_port_and_its_parameters() {
        DatabaseTarget.PostgresServer server = (DatabaseTarget.PostgresServer) DatabaseTarget.parse(
                "postgresql://fleet@db.internal/backstate?sslmode=require", Map.of());
        assertEquals("jdbc:postgresql://db.internal:5432/backstate?sslmode=require", server.jdbcUrl());
        assertEquals("fleet", server.user());
        assertEquals(Optional.empty(), server.password());
    }

    @Test
    void the_password_comes_from_the_environment_or_a_file_and_never_shows_in_the_description() throws Exception {
        DatabaseTarget.PostgresServer direct = (DatabaseTarget.PostgresServer) DatabaseTarget.parse(
                "postgresql://fleet@db:6432/backstate", Map.of("BACKSTATE_DATABASE_PASSWORD", "s3cret-word"));
        assertEquals("s3cret-word", direct.password().orElseThrow().value());
        assertEquals("jdbc:postgresql://db:6432/backstate", direct.jdbcUrl());
        assertFalse(direct.describe().contains("s3cret-word"), direct.describe());

        Path file = Files.writeString(dir.resolve("pw"), "from-a-file\n");
        DatabaseTarget.PostgresServer fromFile = (DatabaseTarget.PostgresServer) DatabaseTarget.parse(
                "postgres://fleet@db/backstate", Map.of("BACKSTATE_DATABASE_PASSWORD_FILE", file.toString()));
        assertEquals("from-a-file", fromFile.password().orElseThrow().value());
    }

    @Test
    void a_password_in_the_url_is_refused_without_echoing_it() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> DatabaseTarget.parse("postgresql://fleet:hunter2@db/backstate", Map.of()));
        assertTrue(e.getMessage().contains("BACKSTATE_DATABASE_PASSWORD"), e.getMessage());
        assertFalse(e.getMessage().contains("hunter2"), e.getMessage());
    }

    @Test
    void urls_without_user_or_database_other_schemes_and_two_password_sources_are_refused() {
        for (String bad : new String[] {"postgresql://db/backstate", "postgresql://fleet@db", "postgresql://fleet@db/a/b",
                "jdbc:postgresql://db/backstate", "mysql://fleet@db/backstate", " "}) {
            IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                    () -> DatabaseTarget.parse(bad, Map.of()), bad);
            assertTrue(e.getMessage().startsWith("setting database"), e.getMessage());
        }
        IllegalArgumentException both = assertThrows(IllegalArgumentException.class, () -> DatabaseTarget.parse(
                "postgresql://fleet@db/backstate", Map.of("BACKSTATE_DATABASE_PASSWORD", "a",
                        "BACKSTATE_DATABASE_PASSWORD_FILE", "/nonexistent")));
        assertTrue(both.getMessage().contains("got both"), both.getMessage());
    }

    @Test
    void the_job_lease_and_pool_size_are_settings_with_bounds() {
        Settings settings = Settings.from(new String[] {"--job-lease", "5", "--database-pool", "12"}, Map.of());
        assertEquals(5, settings.jobLease().toSeconds());
        assertEquals(12, settings.databasePool());
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> Settings.from(new String[] {"--job-lease", "1"}, Map.of()));
        assertTrue(e.getMessage().contains("job-lease"), e.getMessage());
    }
}
