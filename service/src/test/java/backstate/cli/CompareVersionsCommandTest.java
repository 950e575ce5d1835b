package backstate.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import java.net.ServerSocket;
import java.nio.file.Files;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code backstate compare-versions} in-process against a real server with the demo fleet: its exit code
 * is the verdict. v2 fits the stepped-cooling units far worse (χ²/dof 15-63 against ~1 under v1,
 * test-data/demo/README.md), a republished copy of v1 fits exactly as v1 does.
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class CompareVersionsCommandTest {
    static final Path DEMO = TestServer.TEST_DATA.resolve("demo");

    TestServer server;
    int copyOfV1;

    @BeforeAll
    void start(@TempDir Path dir) throws Exception {
        server = new TestServer(dir);
        new DemoLoader(server.base()).load();
        TestServer.Reply r = server.post("/v1/models/reefer-40/versions", "application/json",
                Files.readAllBytes(DEMO.resolve("models/reefer-40.v1.json")));
        assertEquals(201, r.status(), r.body());
        copyOfV1 = r.json().get("version").asInt();
    }

    @AfterAll
    void stop() {
        server.close();
    }

    static CommandRun compareVersions(String... args) {
        return CommandRun.of(CompareVersionsCommand::run, args);
    }

    @Test
    void v1_against_v2_exits_1_and_names_the_worse_units() {
        CommandRun run = compareVersions("--server", server.base(), "--family", "reefer-40", "--baseline", "1", "--candidate", "2",
                "--latest", "1", "--tolerance-chi2", "1");
        assertEquals(CompareVersionsCommand.FAIL, run.exit(), run.out() + run.err());
        assertTrue(run.out().contains("20/20 traces"), run.out());
        assertTrue(run.out().contains("FAIL (rule worse-share): 11 of 20 compared units are worse beyond tolerance"),
                run.out());
        // RCX-80742 (door open) rises most: 237.01 -> 460.68 in the README table.
        assertTrue(run.out().contains("RCX-80742: χ²/dof rose by 223.67"), run.out());
    }

    @Test
    void v1_against_its_republished_copy_exits_0() {
        CommandRun run = compareVersions("--server", server.base(), "--family", "reefer-40", "--baseline", "1",
                "--candidate", Integer.toString(copyOfV1), "--units", "RCX-85159,RCX-24000", "--tolerance-x0", "0");
        assertEquals(CompareVersionsCommand.PASS, run.exit(), run.out() + run.err());
        assertTrue(run.out().contains("PASS (rule worse-share): 0 of 2 compared units"), run.out());
        assertTrue(run.out().contains("delta χ²/dof per unit: median +0.0000, p95 +0.0000"), run.out());
    }

    @Test
    void recording_time_flags_select_traces_by_when_they_were_recorded() {
        // The demo's clock starts at DemoLoader.DEMO_START; RCX-24000's first sample, 540 s on, is the demo's earliest.
        CommandRun first = compareVersions("--server", server.base(), "--family", "reefer-40", "--baseline", "1",
                "--candidate", Integer.toString(copyOfV1), "--to", "2026-11-30T00:10:00Z");
        assertEquals(CompareVersionsCommand.PASS, first.exit(), first.out() + first.err());
        assertTrue(first.out().contains("over 1 trace\n") || first.out().contains("over 1 trace\r\n"), first.out());
        CommandRun none = compareVersions("--server", server.base(), "--family", "reefer-40", "--baseline", "1",
                "--candidate", Integer.toString(copyOfV1), "--from", "2026-12-01T06:00:00Z");
        assertEquals(CompareVersionsCommand.BAD_INPUT, none.exit(), none.out() + none.err());
        assertTrue(none.err().contains("no stored traces"), none.err());
    }

    @Test
    void bad_input_exits_2_with_the_servers_reason() {
        CommandRun same = compareVersions("--server", server.base(), "--family", "reefer-40", "--baseline", "1", "--candidate", "1");
        assertEquals(CompareVersionsCommand.BAD_INPUT, same.exit());
        assertTrue(same.err().contains("candidate: got 1, the same as baseline"), same.err());

        CommandRun unknown = compareVersions("--server", server.base(), "--family", "reefer-40", "--baseline", "1", "--candidate", "99");
        assertEquals(CompareVersionsCommand.BAD_INPUT, unknown.exit());
        assertTrue(unknown.err().contains("HTTP 422"), unknown.err());

        CommandRun flags = compareVersions("--server", server.base(), "--family", "reefer-40", "--baseline", "one", "--candidate", "2");
        assertEquals(CompareVersionsCommand.BAD_INPUT, flags.exit());
        assertTrue(flags.err().contains("got --baseline one, expected a whole number"), flags.err());

        CommandRun both = compareVersions("--server", server.base(), "--family", "reefer-40", "--baseline", "1", "--candidate", "2",
                "--units", "RCX-85159", "--latest", "1");
        assertEquals(CompareVersionsCommand.BAD_INPUT, both.exit());
    }

    @Test
    void an_unreachable_server_exits_2() throws Exception {
        int closedPort;
        try (ServerSocket socket = new ServerSocket(0)) {
            closedPort = socket.getLocalPort();
        }
        CommandRun run = compareVersions("--server", "http://127.0.0.1:" + closedPort, "--family", "reefer-40", "--baseline", "1",
                "--candidate", "2");
        assertEquals(CompareVersionsCommand.BAD_INPUT, run.exit());
        assertEquals("backstate compare-versions: cannot reach http://127.0.0.1:" + closedPort
                + ": connection refused (is the service running there?)" + System.lineSeparator(), run.err());
    }

    /** The run was started, so a server lost while following it leaves no verdict (3), not bad input (2). */
    @Test
    void a_server_lost_after_the_run_started_exits_3_with_the_runs_address() throws Exception {
        FakeRun fake = againstFake(post -> post
                ? new Answer(202, "{\"id\":\"r-1\",\"family\":\"reefer-40\",\"baseline\":1,\"candidate\":2,"
                        + "\"state\":\"queued\",\"progress\":{\"done\":0,\"total\":3}}", null)
                : new Answer(503, "{\"type\":\"/problems/service-unavailable\",\"detail\":\"restarting\"}", null));
        assertEquals(CompareVersionsCommand.NO_VERDICT, fake.run().exit(), fake.run().err());
        assertTrue(fake.run().err().contains("the run goes on on the server; its verdict will be at " + fake.base()
                + "/v1/regressions/r-1"), fake.run().err());
    }

    /** A busy server (503 with Retry-After, as the service's read admission and full queue answer) is waited out. */
    @Test
    void busy_answers_with_retry_after_are_waited_out_when_starting_and_following() throws Exception {
        java.util.concurrent.atomic.AtomicInteger posts = new java.util.concurrent.atomic.AtomicInteger();
        java.util.concurrent.atomic.AtomicInteger gets = new java.util.concurrent.atomic.AtomicInteger();
        FakeRun fake = againstFake(post -> {
            if ((post ? posts : gets).incrementAndGet() == 1) {
                return new Answer(503, "{\"type\":\"/problems/busy\",\"detail\":\"busy\"}", "1");
            }
            return post ? new Answer(202, "{\"id\":\"r-1\",\"family\":\"reefer-40\",\"baseline\":1,\"candidate\":2,"
                    + "\"state\":\"queued\",\"progress\":{\"done\":0,\"total\":1}}", null)
                    : new Answer(200, "{\"id\":\"r-1\",\"state\":\"succeeded\",\"progress\":{\"done\":1,\"total\":1},"
                    + "\"result\":{\"verdict\":{\"pass\":true,\"rule\":\"worse-share\",\"detail\":\"0 of 1 worse\"},"
                    + "\"summary\":{\"compared\":1,\"better\":0,\"worse\":0,\"unchanged\":1,\"notCompared\":0},"
                    + "\"statesComparable\":true,\"worseBeyondTolerance\":[]}}", null);
        });
        assertEquals(CompareVersionsCommand.PASS, fake.run().exit(), fake.run().err());
        assertEquals(List.of(2, 2), List.of(posts.get(), gets.get()), "each busy answer asked once more");
    }

    /** What a fake server answers: its status, JSON body and, unless null, Retry-After. */
    record Answer(int status, String json, String retryAfter) {
    }

    /** The command's run against a fake /v1/regressions, and the fake's address. */
    record FakeRun(CommandRun run, String base) {
    }

    /** Runs compare-versions v1 against v2 on a loopback server answering as {@code answer} says (POST: true). */
    private FakeRun againstFake(java.util.function.Function<Boolean, Answer> answer) throws java.io.IOException {
        com.sun.net.httpserver.HttpServer fake = com.sun.net.httpserver.HttpServer.create(
                new java.net.InetSocketAddress("127.0.0.1", 0), 0);
        fake.createContext("/v1/regressions", exchange -> {
            Answer a = answer.apply(exchange.getRequestMethod().equals("POST"));
            byte[] body = a.json().getBytes(StandardCharsets.UTF_8);
            if (a.retryAfter() != null) {
                exchange.getResponseHeaders().add("Retry-After", a.retryAfter());
            }
            exchange.sendResponseHeaders(a.status(), body.length);
            exchange.getResponseBody().write(body);
            exchange.close();
        });
        fake.start();
        try {
            String base = "http://127.0.0.1:" + fake.getAddress().getPort();
            return new FakeRun(compareVersions("--server", base, "--family", "reefer-40", "--baseline", "1", "--candidate", "2"),
                    base);
        } finally {
            fake.stop(0);
        }
    }

    /** Retry-After read as asked, at least 1 s (0 would have the command ask again at once) and at most 10 s. */
    @Test
    void a_busy_answer_is_waited_out_between_1_and_10_seconds() {
        assertEquals(java.time.Duration.ofSeconds(1), CompareVersionsCommand.busyFor(answer(503, "0")));
        assertEquals(java.time.Duration.ofSeconds(5), CompareVersionsCommand.busyFor(answer(429, "5")));
        assertEquals(java.time.Duration.ofSeconds(10), CompareVersionsCommand.busyFor(answer(503, "3600")));
        assertEquals(null, CompareVersionsCommand.busyFor(answer(503, null)), "no Retry-After: not a call-back");
        assertEquals(null, CompareVersionsCommand.busyFor(answer(500, "5")), "only 503 and 429 are busy answers");
    }

    /** An answer with only a status and, unless null, a Retry-After header. */
    private static java.net.http.HttpResponse<String> answer(int status, String retryAfter) {
        java.net.http.HttpHeaders headers = java.net.http.HttpHeaders.of(retryAfter == null ? java.util.Map.of()
                : java.util.Map.of("Retry-After", List.of(retryAfter)), (name, value) -> true);
        return new java.net.http.HttpResponse<>() {
            public int statusCode() { return status; }
            public java.net.http.HttpRequest request() { return null; }
            public java.util.Optional<java.net.http.HttpResponse<String>> previousResponse() { return java.util.Optional.empty(); }
            public java.net.http.HttpHeaders headers() { return headers; }
            public String body() { return ""; }
            public java.util.Optional<javax.net.ssl.SSLSession> sslSession() { return java.util.Optional.empty(); }
            public java.net.URI uri() { return null; }
            public java.net.http.HttpClient.Version version() { return java.net.http.HttpClient.Version.HTTP_1_1; }
        };
    }

    @Test
    void a_host_that_does_not_resolve_is_named_as_unknown() {
        // RFC 6761: names under .invalid never resolve.
        CommandRun run = compareVersions("--server", "http://backstate.invalid:8080", "--family", "reefer-40", "--baseline", "1",
                "--candidate", "2");
        assertEquals(CompareVersionsCommand.BAD_INPUT, run.exit());
        assertEquals("backstate compare-versions: cannot reach http://backstate.invalid:8080: unknown host"
                + System.lineSeparator(), run.err());
    }

    @Test
    void a_server_flag_that_is_not_a_url_is_refused_before_anything_is_sent() {
        for (String notUrl : List.of("localhost:8080", "backstate.internal", "ftp://backstate.internal/", "http://")) {
            CommandRun run = compareVersions("--server", notUrl, "--family", "reefer-40", "--baseline", "1", "--candidate", "2");
            assertEquals(CompareVersionsCommand.BAD_INPUT, run.exit(), notUrl);
            assertEquals("backstate compare-versions: got --server " + notUrl + ", expected a URL such as"
                    + " http://backstate.internal:8080 (--help for usage)" + System.lineSeparator(), run.err());
        }
    }
}
