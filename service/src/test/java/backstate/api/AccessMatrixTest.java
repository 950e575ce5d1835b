package backstate.api;

import static backstate.api.AuthFixture.ADMIN_ID;
import static backstate.api.AuthFixture.ADMIN_KEY;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.EnumSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;
import java.util.function.Predicate;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import java.util.stream.Collectors;
import org.junit.jupiter.api.DynamicTest;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestFactory;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.AfterParameterizedClassInvocation;
import org.junit.jupiter.params.BeforeParameterizedClassInvocation;
import org.junit.jupiter.params.Parameter;
import org.junit.jupiter.params.ParameterizedClass;
import org.junit.jupiter.params.provider.EnumSource;

/**
 * Every route the server registers × every kind of caller × the subjects the rule depends on,
 * through real HTTP, against the route × role table of docs/security.md ({@link DocumentedAccess}).
 * The expected answer never comes from the route table under test, so a route carrying the wrong
 * {@link Access} value fails here; and a route missing from the documentation, or documented but
 * not served, fails too. The whole matrix runs on each database engine: keys are looked up in the
 * store, so each engine must refuse alike.
 */
@ParameterizedClass
@EnumSource(Engine.class)
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class AccessMatrixTest {
    static final String UNIT_IN = "RCX-100";
    static final String UNIT_OUT = "ZZ-7";
    /** Path parameters the rules do not depend on get a value handlers answer with 400/404, never 401/403. */
    static final String FILLER = "1";
    static final Pattern PARAM = Pattern.compile("\\{([A-Za-z]+)}");
    static final Set<String> PROBLEM_FIELDS = Set.of("type", "title", "status", "detail");

    enum Role { ADMIN, GATEWAY, READER, PIPELINE }

    /** A caller: its Authorization header, its role when the key is valid (null when not), and its units. */
    record Caller(String name, String authorization, Role role, Predicate<String> units) {
        @Override
        public String toString() {
            return name;
        }
    }

    /** What a request is about: a unit (path {unitId}, or the unit of the job in {jobId}) or nothing. */
    record Subject(String name, String unitId, String jobId, String unitOrNull) {
    }

    final Map<String, Map<String, String>> documented = DocumentedAccess.table();
    TestServer server;
    List<Caller> callers;
    List<Subject> jobs;
    List<Subject> units;

    @Parameter
    Engine engine;
    /** Static, so it exists before the first invocation starts its server (SQLite's file goes here). */
    @TempDir
    static Path dir;

    @BeforeParameterizedClassInvocation
    void start() throws Exception {
        server = new TestServer(engine, dir, AuthFixture.env());
        AuthFixture.publishDemoModels(server);
        AuthFixture.Key gatewayIn = AuthFixture.issue(server, "gateway", "RCX-1*", "gateway north");
        AuthFixture.Key gatewayOut = AuthFixture.issue(server, "gateway", "RCX-2*", "gateway south");
        AuthFixture.Key reader = AuthFixture.issue(server, "reader", null, "dashboard");
        AuthFixture.Key pipeline = AuthFixture.issue(server, "pipeline", null, "release pipeline");
        AuthFixture.Key revoked = AuthFixture.issue(server, "admin", null, "former admin");
        AuthFixture.revoke(server, revoked.id());
        Predicate<String> none = unit -> false;
        callers = List.of(
                new Caller("admin", "Bearer " + ADMIN_KEY, Role.ADMIN, none),
                new Caller("gateway RCX-1*", "Bearer " + gatewayIn.text(), Role.GATEWAY, unit -> unit.startsWith("RCX-1")),
                new Caller("gateway RCX-2*", "Bearer " + gatewayOut.text(), Role.GATEWAY, unit -> unit.startsWith("RCX-2")),
                new Caller("reader", "Bearer " + reader.text(), Role.READER, none),
                new Caller("pipeline", "Bearer " + pipeline.text(), Role.PIPELINE, none),
                new Caller("no key", null, null, none),
                new Caller("wrong secret", "Bearer bsk_" + ADMIN_ID + "_" + "f".repeat(64), null, none),
                new Caller("malformed key", "Bearer not-a-key", null, none),
                new Caller("revoked admin key", "Bearer " + revoked.text(), null, none));
        String regression = insertRegressionJob(server.database());
        jobs = List.of(
                new Subject("job of " + UNIT_IN, FILLER, AuthFixture.jobFor(server, UNIT_IN), UNIT_IN),
                new Subject("job of " + UNIT_OUT, FILLER, AuthFixture.jobFor(server, UNIT_OUT), UNIT_OUT),
                new Subject("job without a trace", FILLER, regression, null));
        units = List.of(new Subject(UNIT_IN, UNIT_IN, FILLER, UNIT_IN), new Subject(UNIT_OUT, UNIT_OUT, FILLER, UNIT_OUT));
    }

    @AfterParameterizedClassInvocation
    void stop() {
        server.close();
    }

    /**
     * The documented cell's verdict: 0 when the request reaches its handler, else the status of
     * the refusal. A caller without a valid key reads the "no key" column.
     */
    static int expected(Map<String, String> row, Caller c, Subject s) {
        String column = c.role() == null ? "no key" : c.role().name().toLowerCase(Locale.ROOT);
        String cell = row.get(column);
        int refusal = c.role() == null ? 401 : 403;
        boolean gatewayForSubject = c.role() == Role.GATEWAY && s.unitOrNull() != null && c.units().test(s.unitOrNull());
        return switch (cell) {
            case DocumentedAccess.YES -> 0;
            case DocumentedAccess.NO -> refusal;
            case DocumentedAccess.GATEWAY_OWN_UNITS, DocumentedAccess.GATEWAY_OWN_UNITS_JOBS -> gatewayForSubject ? 0 : refusal;
            default -> throw new AssertionError("docs/security.md: unknown cell '" + cell + "' in column " + column);
        };
    }

    static String key(Route r) {
        return r.method().name() + " " + r.path();
    }

    List<Route> routes() {
        return server.app().api().routes();
    }

    List<Subject> subjects(Route r) {
        if (r.path().contains("{" + AccessGuard.JOB_PARAM + "}")) {
            return jobs;
        }
        if (r.path().contains("{" + AccessGuard.UNIT_PARAM + "}")) {
            return units;
        }
        return List.of(new Subject("no subject", FILLER, FILLER, null));
    }

    @Test
    void route_table_uses_every_access_rule_so_each_is_exercised() {
        Set<Access> used = routes().stream().map(Route::access).collect(Collectors.toCollection(() -> EnumSet.noneOf(Access.class)));
        assertEquals(EnumSet.allOf(Access.class), used);
    }

    @Test
    void docs_table_lists_exactly_the_routes_the_server_serves() {
        Set<String> served = routes().stream().map(AccessMatrixTest::key).collect(Collectors.toCollection(TreeSet::new));
        assertEquals(served, new TreeSet<>(documented.keySet()));
    }

    @Test
    void docs_table_scopes_gateways_only_by_the_parameter_the_route_has() {
        for (Map.Entry<String, Map<String, String>> row : documented.entrySet()) {
            for (Map.Entry<String, String> cell : row.getValue().entrySet()) {
                String scoped = switch (cell.getValue()) {
                    case DocumentedAccess.GATEWAY_OWN_UNITS -> "{" + AccessGuard.UNIT_PARAM + "}";
                    case DocumentedAccess.GATEWAY_OWN_UNITS_JOBS -> "{" + AccessGuard.JOB_PARAM + "}";
                    default -> null;
                };
                assertTrue(scoped == null || cell.getKey().equals("gateway") && row.getKey().contains(scoped),
                        row.getKey() + " " + cell.getKey() + ": " + cell.getValue());
            }
        }
    }

    @Test
    void docs_table_keeps_readers_read_only_and_lets_gateways_cancel_their_units_jobs() {
        // The decision of issue 14: a reader changes nothing; a gateway may cancel what it posted.
        for (Map.Entry<String, Map<String, String>> row : documented.entrySet()) {
            String reader = row.getValue().get("reader");
            boolean readOnly = row.getKey().startsWith("GET ") || row.getKey().endsWith("/plans");
            assertTrue(readOnly || reader.equals(DocumentedAccess.NO), row.getKey() + " reader: " + reader);
        }
        assertEquals(Map.of("no key", "—", "admin", "yes", "gateway", "its units' jobs", "reader", "—", "pipeline", "—"),
                documented.get("POST /v1/jobs/{jobId}/cancel"));
    }

    @TestFactory
    List<DynamicTest> every_route_answers_every_caller_by_its_access_rule() {
        List<DynamicTest> cells = new ArrayList<>();
        for (Route r : routes()) {
            assertTrue(documented.containsKey(key(r)), () -> key(r) + " is not in docs/security.md's table");
            for (Subject s : subjects(r)) {
                String path = fill(r.path(), s);
                for (Caller c : callers) {
                    int denial = expected(documented.get(key(r)), c, s);
                    String name = r.method() + " " + r.path() + " [" + s.name() + "] as " + c + " → "
                            + (denial == 0 ? "handler" : Integer.toString(denial));
                    cells.add(DynamicTest.dynamicTest(name, () -> check(name, r, path, c, s, denial)));
                }
            }
        }
        return cells;
    }

    void check(String cell, Route r, String path, Caller c, Subject s, int denial) {
        TestServer.Reply reply = new AsKey(server, c.authorization()).send(r.method().name(), path, null, null);
        if (denial == 0) {
            assertFalse(reply.status() == 401 || reply.status() == 403,
                    () -> cell + ": expected the handler's answer, got " + reply.status() + " " + reply.body());
            return;
        }
        assertEquals(denial, reply.status(), () -> cell + ": " + reply.body());
        assertTrue(reply.contentType().startsWith("application/problem+json"), reply.contentType());
        JsonNode problem = reply.json();
        assertEquals(PROBLEM_FIELDS, fieldNames(problem), "a refusal carries no data: " + reply.body());
        assertEquals(denial, problem.get("status").asInt());
        assertEquals(denial == 401 ? "/problems/unauthorized" : "/problems/forbidden", problem.get("type").asText());
        for (String leak : new String[] {s.unitId(), s.jobId(), UNIT_IN, UNIT_OUT}) {
            assertFalse(!leak.equals(FILLER) && reply.body().contains(leak), "refusal mentions " + leak + ": " + reply.body());
        }
        if (denial == 401) {
            assertTrue(reply.headers().firstValue("WWW-Authenticate").orElse("").startsWith("Bearer realm=\"backstate\""),
                    reply.headers().toString());
        }
    }

    static String fill(String template, Subject s) {
        Matcher m = PARAM.matcher(template);
        StringBuilder path = new StringBuilder();
        while (m.find()) {
            String value = switch (m.group(1)) {
                case AccessGuard.UNIT_PARAM -> s.unitId();
                case AccessGuard.JOB_PARAM -> s.jobId();
                default -> FILLER;
            };
            m.appendReplacement(path, value);
        }
        return m.appendTail(path).toString();
    }

    static Set<String> fieldNames(JsonNode node) {
        Set<String> names = new TreeSet<>();
        node.fieldNames().forEachRemaining(names::add);
        return names;
    }

    /** A job with no trace, as regressions are: written straight to the database, already finished so no worker takes it. */
    static String insertRegressionJob(TestDatabase db) throws Exception {
        String id = "regression-job-1";
        try (Connection c = db.connect(); Statement s = c.createStatement()) {
            s.executeUpdate("INSERT INTO jobs (id, kind, state, trace_id, params_json, attempt, created_at, finished_at)"
                    + " VALUES ('" + id + "', 'regression', 'failed', NULL, '{}', 0, 0, 0)");
        }
        return id;
    }
}
