package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.net.URI;
import java.net.http.HttpRequest;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.time.Duration;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeSet;
import java.util.stream.Stream;
import org.flywaydb.core.Flyway;
import org.flywaydb.core.api.MigrationInfo;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * A database file written at any earlier schema version, with rows in every table that version
 * has, is migrated to the latest version when the service starts on it, and everything in it reads
 * back through the HTTP API as the service that wrote the rows answered: models and versions, jobs,
 * estimates and their series, a unit's history and trend, the fleet views, API keys (which still
 * authenticate), regression runs, and an Idempotency-Key's replay. A job left queued in the old
 * file is solved after the start.
 *
 * <p>The rows come from a server of today (the donor): each table of the old file gets the donor's
 * rows in the columns that version has. The earlier versions are every migration below the latest
 * one shipped, so a new migration is covered without touching this test. Rows an older version
 * could not hold are left out, and what the API then answers without them is stated per version:
 * regression runs arrived in V3, API keys in V4, the pipeline role in V8, failure details in V9.
 */
class MigrationFromEveryVersionTest {
    /** Where the service's SQLite migrations live (store.Migrations.SQLITE). */
    static final String MIGRATIONS = "classpath:db/migration/sqlite";
    static final int REGRESSIONS_SINCE = 3;
    static final int KEYS_SINCE = 4;
    static final int PIPELINE_ROLE_SINCE = 8;
    static final int FAILURE_DETAILS_SINCE = 9;
    static final String FAMILY = "reefer-40";
    static final List<String> UNITS = List.of("RCX-85159", "RCX-20123", "RCX-12471");
    /** The queued job's unit and version: read by no compared route, so its solve cannot race them. */
    static final String QUEUED_UNIT = "RCX-70001";
    static final Duration JOB_WAIT = Duration.ofSeconds(60);

    @TempDir
    static Path shared;
    static Path donorFile;
    /** Every compared GET path, with the donor's answer. */
    static final Map<String, JsonNode> ANSWERS = new LinkedHashMap<>();
    /** The donor's key list (compared apart: what a file before V4 holds differs). */
    static JsonNode donorKeys;
    static String failedJobId;
    static String regressionId;
    static String gatewayKey;
    static String revokedKey;
    static String replayJobId;
    /** A job of RCX-85159, whose unit the gateway key's pattern covers. */
    static String gatewayJobId;

    @TempDir
    Path dir;

    /** Every schema version below the latest shipped one, from the migrations themselves. */
    static Stream<Integer> earlierVersions() {
        Path probe = shared.resolve("versions.db");
        MigrationInfo[] all = Flyway.configure().dataSource("jdbc:sqlite:" + probe, null, null).locations(MIGRATIONS)
                .load().info().all();
        List<Integer> versions = Stream.of(all).map(m -> Integer.parseInt(m.getVersion().getVersion())).sorted().toList();
        assertTrue(versions.size() >= 7 && versions.get(0) == 1, "migrations found: " + versions);
        return versions.subList(0, versions.size() - 1).stream();
    }

    @BeforeAll
    static void donor() throws Exception {
        Path folder = Files.createDirectories(shared.resolve("donor"));
        try (TestServer server = new TestServer(folder, AuthFixture.env())) {
            AsKey admin = AsKey.bearer(server, AuthFixture.ADMIN_KEY);
            publishAndRetire(admin);
            for (String unit : UNITS) {
                for (int version = 1; version <= 2; version++) {
                    TestServer.Reply r = admin.post("/v1/units/" + unit + "/traces?model=" + FAMILY + "&version=" + version,
                            "text/csv", AuthFixture.file("demo/traces/" + unit + ".csv"));
                    assertEquals(202, r.status(), r.body());
                    gatewayJobId = gatewayJobId == null ? r.json().get("jobId").asText() : gatewayJobId;
                }
            }
            replayJobId = keyedPost(admin).json().get("jobId").asText();
            failedJobId = admin.postJson("/v1/units/T-1/traces?model=pair&version=1",
                    "{\"time\":[0,60,120,180],\"outputs\":{\"probe\":[5,4.9,4.8,4.75]}}").json().get("jobId").asText();
            gatewayKey = AuthFixture.issue(server, "gateway", "RCX-8*", "yard gateway").text();
            AuthFixture.issue(server, "pipeline", null, "release pipeline");
            AuthFixture.Key reader = AuthFixture.issue(server, "reader", null, "old dashboard");
            AuthFixture.revoke(server, reader.id());
            revokedKey = reader.text();
            for (String job : jobIds(folder.resolve("test.db"), "estimate")) {
                awaitJob(admin, "/v1/jobs/" + job);
            }
            TestServer.Reply run = admin.postJson("/v1/regressions",
                    "{\"family\":\"" + FAMILY + "\",\"baseline\":1,\"candidate\":2,\"traces\":{\"latestPerUnit\":1}}");
            assertEquals(202, run.status(), run.body());
            regressionId = run.json().get("id").asText();
            awaitJob(admin, "/v1/regressions/" + regressionId);
            for (String path : comparedPaths(admin, folder.resolve("test.db"))) {
                TestServer.Reply r = admin.get(path);
                assertEquals(200, r.status(), path + ": " + r.body());
                ANSWERS.put(path, r.json());
            }
            donorKeys = admin.get("/v1/keys").json().get("items");
        }
        donorFile = folder.resolve("test.db");
        assertEquals("failed", ANSWERS.get("/v1/jobs/" + failedJobId).get("state").asText());
        assertTrue(ANSWERS.get("/v1/jobs/" + failedJobId).has("unobservableDirections"));
    }

    @ParameterizedTest(name = "from V{0}")
    @MethodSource("earlierVersions")
    void a_file_at_an_earlier_version_migrates_and_reads_back_through_the_api(int version) throws Exception {
        Path file = dir.resolve("test.db");
        Flyway.configure().dataSource("jdbc:sqlite:" + file, null, null).locations(MIGRATIONS).target(String.valueOf(version))
                .load().migrate();
        Map<String, Long> copied = copyDonorRows(file, version);
        String queuedJob = leaveAJobQueued(file);

        try (TestServer server = new TestServer(dir, AuthFixture.env())) {
            AsKey admin = AsKey.bearer(server, AuthFixture.ADMIN_KEY);
            for (Map.Entry<String, JsonNode> answer : ANSWERS.entrySet()) {
                String path = answer.getKey();
                TestServer.Reply r = admin.get(path);
                JsonNode expected = expectedAt(version, path, answer.getValue());
                if (expected == null) {
                    assertEquals(404, r.status(), "V" + version + " " + path + ": " + r.body());
                } else {
                    assertEquals(200, r.status(), "V" + version + " " + path + ": " + r.body());
                    assertEquals(withoutClock(expected), withoutClock(r.json()), "V" + version + " " + path);
                }
            }
            assertKeys(server, admin, version);

            TestServer.Reply replay = keyedPost(admin);
            assertEquals(202, replay.status(), replay.body());
            assertEquals("true", replay.headers().firstValue("Backstate-Replayed").orElse(""), "the stored Idempotency-Key");
            assertEquals(replayJobId, replay.json().get("jobId").asText());

            JsonNode job = awaitJob(admin, "/v1/jobs/" + queuedJob);
            assertEquals("succeeded", job.get("state").asText(), "the job left queued in the old file: " + job);
            assertEquals(QUEUED_UNIT, admin.get("/v1/units/" + QUEUED_UNIT + "/estimates/latest").json().get("unitId").asText());
        }
        assertTrue(copied.values().stream().allMatch(n -> n > 0), "every table held rows: " + copied);
        // After the migration every table holds rows (V2's fleet tables filled from V1's estimates), but
        // regressions in a file from before them.
        List<String> empty = tablesAt(file, "main").stream().filter(t -> rowCount(file, t) == 0).toList();
        assertEquals(version < REGRESSIONS_SINCE ? List.of("regressions") : List.of(), empty, "empty tables after the migration");
    }

    /** What the donor's answer becomes for a file that started at {@code version}; null where the API must answer 404. */
    private static JsonNode expectedAt(int version, String path, JsonNode donor) {
        if (path.startsWith("/v1/regressions") && version < REGRESSIONS_SINCE) {
            return path.contains("?") ? emptyPage(donor) : null;
        }
        if (path.equals("/v1/jobs/" + regressionId) && version < REGRESSIONS_SINCE) {
            return null;
        }
        if (path.equals("/v1/jobs/" + failedJobId) && version < FAILURE_DETAILS_SINCE) {
            ObjectNode withoutDetails = donor.deepCopy();
            withoutDetails.remove("unobservableDirections");
            return withoutDetails;
        }
        return donor;
    }

    /**
     * An answer less what is reckoned from the time it was given (the fleet summary's "asOf": now, and
     * "stale.before": now less staleAfter), which differs between the two servers by nature.
     */
    private static JsonNode withoutClock(JsonNode answer) {
        JsonNode copy = answer.deepCopy();
        if (copy instanceof ObjectNode object) {
            object.remove("asOf");
            if (object.get("stale") instanceof ObjectNode stale) {
                stale.remove("before");
            }
        }
        return copy;
    }

    private static JsonNode emptyPage(JsonNode donor) {
        ObjectNode page = donor.deepCopy();
        page.putArray("items");
        return page;
    }

    /** The key list as stored, and keys issued on the donor still authenticate (or stay revoked). */
    private static void assertKeys(TestServer server, AsKey admin, int version) throws Exception {
        JsonNode keys = admin.get("/v1/keys").json().get("items");
        if (version < KEYS_SINCE) {
            // No api_keys table yet: the start stored BACKSTATE_ADMIN_KEY as the only key.
            assertEquals(List.of(AuthFixture.ADMIN_ID), ids(keys));
            return;
        }
        List<JsonNode> expected = new ArrayList<>();
        donorKeys.forEach(k -> {
            if (version >= PIPELINE_ROLE_SINCE || !k.get("role").asText().equals("pipeline")) {
                expected.add(k);
            }
        });
        assertEquals(expected, listOf(keys));
        assertEquals(200, AsKey.bearer(server, gatewayKey).get("/v1/jobs/" + gatewayJobId).status(), "the gateway key still works");
        assertEquals(401, AsKey.bearer(server, revokedKey).get("/v1/models").status(), "the revoked key stays revoked");
    }

    // ---- the donor

    private static void publishAndRetire(AsKey admin) {
        assertEquals(201, admin.postJson("/v1/models", "{\"name\":\"" + FAMILY + "\",\"description\":\"demo\"}").status());
        for (int v = 1; v <= 2; v++) {
            TestServer.Reply r = admin.post("/v1/models/" + FAMILY + "/versions", "application/json",
                    AuthFixture.file("demo/models/reefer-40.v" + v + ".json"));
            assertEquals(201, r.status(), r.body());
        }
        assertEquals(201, admin.postJson("/v1/models", "{\"name\":\"pair\",\"description\":\"two tanks, one probe\"}").status());
        assertEquals(201, admin.postJson("/v1/models/pair/versions", OpenApiContractTest.PAIR_MODEL).status());
        assertEquals(201, admin.postJson("/v1/models/pair/versions", OpenApiContractTest.PAIR_MODEL).status());
        assertEquals(200, admin.post("/v1/models/pair/versions/2/retire", null, null).status());
    }

    /** A trace posted with an Idempotency-Key, as admin. */
    private static TestServer.Reply keyedPost(AsKey admin) {
        return admin.server().send(HttpRequest.newBuilder(URI.create(admin.server().base() + "/v1/units/RCX-24000/traces?model="
                        + FAMILY + "&version=1"))
                .POST(HttpRequest.BodyPublishers.ofByteArray(AuthFixture.file("demo/traces/RCX-24000.csv")))
                .header("Content-Type", "text/csv").header("Authorization", admin.authorization())
                .header("Idempotency-Key", "migration-replay"));
    }

    private static List<String> comparedPaths(AsKey admin, Path file) {
        List<String> paths = new ArrayList<>(List.of("/v1/models", "/v1/models/" + FAMILY, "/v1/models/" + FAMILY + "/versions",
                "/v1/models/" + FAMILY + "/versions/2", "/v1/models/pair/versions", "/v1/fleet/" + FAMILY + "/summary?version=1",
                "/v1/fleet/" + FAMILY + "/units?version=1", "/v1/regressions?family=" + FAMILY,
                "/v1/regressions/" + regressionId));
        for (String unit : UNITS) {
            paths.add("/v1/units/" + unit + "/estimates/latest");
            paths.add("/v1/units/" + unit + "/estimates");
            paths.add("/v1/units/" + unit + "/trend?state=cargo_core&model=" + FAMILY);
        }
        for (String job : jobIds(file, null)) {
            paths.add("/v1/jobs/" + job);
        }
        for (String estimate : strings(file, "SELECT id FROM estimates ORDER BY id")) {
            paths.add("/v1/estimates/" + estimate);
            paths.add("/v1/estimates/" + estimate + "/series?maxPoints=20");
        }
        return paths;
    }

    private static JsonNode awaitJob(AsKey caller, String path) throws InterruptedException {
        long deadline = System.nanoTime() + JOB_WAIT.toNanos();
        while (System.nanoTime() < deadline) {
            JsonNode job = caller.get(path).json();
            String state = job.path("state").asText();
            if (!state.equals("queued") && !state.equals("running")) {
                return job;
            }
            Thread.sleep(20);
        }
        throw new AssertionError(path + " did not finish within " + JOB_WAIT);
    }

    // ---- the old file

    /** The schema version that rebuilt the fleet tables by recording time. */
    private static final int RECORDING_TIME_SINCE = 7;
    /** Fleet tables derived from the estimates that V7 rebuilds and refills (estimate_states it keeps). */
    private static final java.util.Set<String> FLEET_TABLES =
            java.util.Set.of("estimate_channels", "unit_latest", "unit_version_latest");

    /** The donor's rows in every table of the old file, in the columns the old table has; returns rows per table. */
    private static Map<String, Long> copyDonorRows(Path file, int version) throws SQLException {
        Map<String, Long> copied = new LinkedHashMap<>();
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + file); Statement s = c.createStatement()) {
            s.execute("ATTACH DATABASE '" + donorFile + "' AS donor");
            for (String table : tablesAt(c, "main")) {
                if (table.equals("queue_length")) {
                    continue; // kept by triggers as the jobs arrive
                }
                if (version < RECORDING_TIME_SINCE && FLEET_TABLES.contains(table)) {
                    continue; // derived from the estimates; V7 rebuilds and refills them by recording time
                }
                List<String> columns = columns(c, "main", table);
                columns.retainAll(columns(c, "donor", table));
                String list = String.join(", ", columns);
                copied.put(table, (long) s.executeUpdate("INSERT INTO main." + table + " (" + list + ") SELECT " + list
                        + " FROM donor." + table + " WHERE " + onlyWhatTheVersionHeld(table, version)));
            }
            if (columns(c, "main", "estimates").contains("series")) {
                s.executeUpdate("UPDATE estimates SET series = randomblob(64)"); // V1-V4 stored a series with each estimate
            }
            s.execute("DETACH DATABASE donor");
        }
        return copied;
    }

    private static String onlyWhatTheVersionHeld(String table, int version) {
        if (table.equals("jobs") && version < REGRESSIONS_SINCE) {
            return "kind <> 'regression'";
        }
        if (table.equals("api_keys") && version < PIPELINE_ROLE_SINCE) {
            return "role <> 'pipeline'";
        }
        return "true";
    }

    /** A copy of a stored trace under a new unit and model version 2, with its estimate job still queued; returns its ID. */
    private static String leaveAJobQueued(Path file) throws SQLException {
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + file); Statement s = c.createStatement()) {
            s.executeUpdate("INSERT INTO traces (id, unit_id, family, version, received_at, samples, window_start, window_end, payload)"
                    + " SELECT 'queued-trace', '" + QUEUED_UNIT + "', family, 2, received_at + 1, samples, window_start, window_end,"
                    + " payload FROM traces WHERE unit_id = 'RCX-85159' AND version = 1");
            s.executeUpdate("INSERT INTO jobs (id, kind, state, trace_id, attempt, created_at, progress_done, progress_total)"
                    + " VALUES ('queued-job', 'estimate', 'queued', 'queued-trace', 0, 1764633600000, 0, 0)");
        }
        return "queued-job";
    }

    // ---- SQL helpers

    static List<String> tablesAt(Path file, String schema) {
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + file)) {
            return tablesAt(c, schema);
        } catch (SQLException e) {
            throw new AssertionError(e);
        }
    }

    static List<String> tablesAt(Connection c, String schema) throws SQLException {
        return strings(c, "SELECT name FROM " + schema + ".sqlite_schema WHERE type = 'table' AND name NOT LIKE 'sqlite_%'"
                + " AND name <> 'flyway_schema_history' ORDER BY rootpage");
    }

    static List<String> columns(Connection c, String schema, String table) throws SQLException {
        return strings(c, "SELECT name FROM pragma_table_info('" + table + "', '" + schema + "')");
    }

    static long rowCount(Path file, String table) {
        return Long.parseLong(strings(file, "SELECT COUNT(*) FROM " + table).get(0));
    }

    static List<String> jobIds(Path file, String kindOrNull) {
        return strings(file, "SELECT id FROM jobs" + (kindOrNull == null ? "" : " WHERE kind = '" + kindOrNull + "'") + " ORDER BY id");
    }

    static List<String> strings(Path file, String sql) {
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + file)) {
            return strings(c, sql);
        } catch (SQLException e) {
            throw new AssertionError(sql, e);
        }
    }

    static List<String> strings(Connection c, String sql) throws SQLException {
        List<String> out = new ArrayList<>();
        try (Statement s = c.createStatement(); ResultSet rs = s.executeQuery(sql)) {
            while (rs.next()) {
                out.add(rs.getString(1));
            }
        }
        return out;
    }

    private static List<String> ids(JsonNode keys) {
        return new ArrayList<>(new TreeSet<>(listOf(keys).stream().map(k -> k.get("id").asText()).toList()));
    }

    private static List<JsonNode> listOf(JsonNode array) {
        List<JsonNode> out = new ArrayList<>();
        array.forEach(out::add);
        return out;
    }
}
