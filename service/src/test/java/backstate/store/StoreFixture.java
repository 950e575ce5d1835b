package backstate.store;

import backstate.jobs.NewEstimate;
import backstate.formats.EstimateDocument;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.time.Instant;
import java.util.List;

/**
 * A store on a fresh database with one published model ("pump" version 1), a test clock, and raw
 * JDBC access to the same database for counting rows behind the store's back: a SQLite file in
 * the given folder, or a fresh database on the embedded PostgreSQL server ({@link Backend}).
 */
public final class StoreFixture implements AutoCloseable {

    private static final ObjectMapper DOCUMENTS = new ObjectMapper();

    public static final Instant T0 = Instant.parse("2025-03-01T12:00:00Z");
    public static final String FAMILY = "pump";
    public static final int VERSION = 1;

    public final Backend backend;
    /** The SQLite file; null on PostgreSQL. */
    public final Path file;
    /** The PostgreSQL database's JDBC URL; null on SQLite. */
    public final String jdbcUrl;
    public final TestClock clock = new TestClock(T0);
    public final Database store;

    public StoreFixture(Path dir) {
        this(dir, SqliteSettings.defaults());
    }

    public StoreFixture(Path dir, SqliteSettings settings) {
        this.backend = Backend.SQLITE;
        this.file = dir.resolve("backstate.db");
        this.jdbcUrl = null;
        this.store = new SqliteDatabase(file, clock, settings);
        publishPump(store);
    }

    /** A store on {@code backend}: a file in {@code dir} for SQLite, a fresh database for PostgreSQL. */
    public StoreFixture(Path dir, Backend backend) {
        this.backend = backend;
        this.file = backend == Backend.SQLITE ? dir.resolve("backstate.db") : null;
        this.jdbcUrl = backend == Backend.POSTGRESQL ? PostgresServer.newDatabase() : null;
        this.store = open();
        publishPump(store);
    }

    /**
     * Another store on the same database, with the same clock: on PostgreSQL a second replica.
     * (On SQLite a second store on one file is a second process's view, which the service never opens.)
     */
    public Database open() {
        return backend == Backend.SQLITE ? new SqliteDatabase(file, clock)
                : new PostgresDatabase(PostgresServer.settings(jdbcUrl), clock);
    }

    /** The SQLite store, for tests of what only SQLite has (its writer, its file, its crash recovery). */
    public SqliteDatabase sqlite() {
        if (!(store instanceof SqliteDatabase sqlite)) {
            throw new IllegalStateException("got a " + backend + " store, expected SQLite");
        }
        return sqlite;
    }

    public static void publishPump(Database store) {
        store.models().createFamily(FAMILY, "test pumps", T0);
        store.models().publishVersion(pumpVersion(), T0);
    }

    public static NewModelVersion pumpVersion() {
        return new NewModelVersion(FAMILY, "discrete", 2, 1, 1, "{\"a\":[[1,0],[0,1]]}", "{\"rank\":2}");
    }

    /** An Idempotency-Key as a post of {@link #trace} would carry it: every call with the same key is the same request. */
    public static IdempotencyKey key(String key) {
        return key(key, "the same request");
    }

    /** An Idempotency-Key with the fingerprint of {@code request} (its SHA-256), for a request other than {@link #key(String)}'s. */
    public static IdempotencyKey key(String key, String request) {
        try {
            return new IdempotencyKey(key, java.security.MessageDigest.getInstance("SHA-256")
                    .digest(request.getBytes(java.nio.charset.StandardCharsets.UTF_8)));
        } catch (java.security.NoSuchAlgorithmException e) {
            throw new AssertionError(e);
        }
    }

    public static NewTrace trace(String unitId) {
        return new NewTrace(unitId, FAMILY, VERSION, 3, 0.0, 2.0, unitId.getBytes(StandardCharsets.UTF_8));
    }

    public static NewEstimate estimate(String traceId, String unitId, String family, int version,
                                       List<String> flags, String summaryJson) {
        return estimate(traceId, unitId, family, version, 0.0, 2.0, 1.25, flags, summaryJson);
    }

    /**
     * An estimate stored with {@code summaryJson}, its fleet figures typed from that text read as an
     * {@link EstimateDocument}, as a job's are from the document it serialises; text that is not such
     * a document gives no figures.
     */
    public static NewEstimate estimate(String traceId, String unitId, String family, int version, double windowStart,
                                       double windowEnd, Double chi2PerDof, List<String> flags, String summaryJson) {
        return NewEstimate.of(traceId, unitId, family, version, windowStart, windowEnd, chi2PerDof, flags,
                documentOrNull(summaryJson), summaryJson);
    }

    private static EstimateDocument documentOrNull(String json) {
        try {
            return DOCUMENTS.readValue(json, EstimateDocument.class);
        } catch (JsonProcessingException notADocument) {
            return null;
        }
    }

    /** A connection of its own to the store's database, outside the store. */
    public Connection raw() throws SQLException {
        return backend == Backend.SQLITE ? DriverManager.getConnection("jdbc:sqlite:" + file.toAbsolutePath())
                : PostgresServer.connect(jdbcUrl);
    }

    public long count(String sql, Object... params) throws SQLException {
        try (Connection c = raw(); PreparedStatement ps = c.prepareStatement(sql)) {
            for (int i = 0; i < params.length; i++) {
                ps.setObject(i + 1, params[i]);
            }
            try (ResultSet rs = ps.executeQuery()) {
                rs.next();
                return rs.getLong(1);
            }
        }
    }

    public long rows(String table) throws SQLException {
        return count("SELECT COUNT(*) FROM " + table);
    }

    /** SQLite's own check of the file's structure; SQLite only. */
    public String integrityCheck() throws SQLException {
        sqlite();
        return integrityCheck(file);
    }

    public static String integrityCheck(Path file) throws SQLException {
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + file.toAbsolutePath());
             Statement s = c.createStatement();
             ResultSet rs = s.executeQuery("PRAGMA integrity_check")) {
            rs.next();
            return rs.getString(1);
        }
    }

    @Override
    public void close() {
        store.close();
        if (jdbcUrl != null) {
            PostgresServer.dropDatabase(jdbcUrl);
        }
    }
}
