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
 * Every route in the server's own route table × every kind of caller × the subjects the rule
 * depends on, through real HTTP. The expected answer is written from the rules documented on
 * {@link Access} as a function of (access, role, scope), not from a list of paths, so routes
 * added to the table later are walked and checked without touching this test. The whole matrix
 * runs on each database engine: keys are looked up in the store, so each engine must refuse alike.
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
     * The rules of {@link Access}, restated: 0 when the request reaches its handler, else the
     * status of the refusal. The switch names every Access value, so a new one fails to compile
     * here until its rule is written down.
     */
    static int expected(Access access, Caller c, Subject s) {
        if (access == Access.PUBLIC) {
            return 0;
        }
        if (c.role() == null) {
            return 401;
        }
        boolean admin = c.role() == Role.ADMIN;
        boolean reader = c.role() == Role.READER;
        boolean pipeline = c.role() == Role.PIPELINE;
        boolean gatewayForSubject = c.role() == Role.GATEWAY && s.unitOrNull() != null && c.units().test(s.unitOrNull());
        boolean allowed = switch (access) {
            case PUBLIC, ANY_KEY -> true;
            case ADMIN -> admin;
            case READER -> admin || reader || pipeline;
            case PIPELINE -> admin || pipeline;
            case GATEWAY_FOR_UNIT -> admin || gatewayForSubject;
            case JOB_OF_UNIT -> admin || reader || gatewayForSubject;
        };
        return allowed ? 0 : 403;
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
    void matrix_has_the_expected_refusals_for_the_known_rules() {
        // Spot checks of the restated rules themselves, so a slip in expected() cannot hide one in the guard.
        Caller gateway = callers.get(1);
        Caller reader = callers.get(3);
        Caller pipeline = callers.get(4);
        assertEquals(0, expected(Access.GATEWAY_FOR_UNIT, gateway, units.get(0)));
        assertEquals(403, expected(Access.GATEWAY_FOR_UNIT, gateway, units.get(1)));
        assertEquals(403, expected(Access.JOB_OF_UNIT, gateway, jobs.get(2)));
        assertEquals(0, expected(Access.JOB_OF_UNIT, reader, jobs.get(2)));
        assertEquals(403, expected(Access.ADMIN, reader, units.get(0)));
        assertEquals(401, expected(Access.ANY_KEY, callers.get(8), units.get(0)));
        assertEquals(0, expected(Access.PIPELINE, pipeline, units.get(0)));
        assertEquals(403, expected(Access.PIPELINE, reader, units.get(0)));
        assertEquals(0, expected(Access.READER, pipeline, units.get(0)));
        assertEquals(403, expected(Access.JOB_OF_UNIT, pipeline, jobs.get(0)));
        assertEquals(403, expected(Access.ADMIN, pipeline, units.get(0)));
        assertEquals(403, expected(Access.GATEWAY_FOR_UNIT, pipeline, units.get(0)));
    }

    @TestFactory
    List<DynamicTest> every_route_answers_every_caller_by_its_access_rule() {
        List<DynamicTest> cells = new ArrayList<>();
        for (Route r : routes()) {
            for (Subject s : subjects(r)) {
                String path = fill(r.path(), s);
                for (Caller c : callers) {
                    int denial = expected(r.access(), c, s);
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
