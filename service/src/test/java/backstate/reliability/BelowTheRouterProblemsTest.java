package backstate.reliability;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.Map;
import java.util.stream.Stream;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Requests Jetty refuses before any route runs get the same problem+json as every other 4xx,
 * with an {@code errors} array naming the offending part (RFC 9457 section 3 allows extension
 * members; ours is {@code errors}). Before, these came without {@code errors}.
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class BelowTheRouterProblemsTest {
    TestServer server;

    @BeforeAll
    void start(@TempDir Path dir) {
        server = new TestServer(dir);
    }

    @AfterAll
    void stop() {
        server.close();
    }

    static Stream<Arguments> refusedBelowTheRouter() {
        return Stream.of(
                Arguments.of("control character 0x01 in a header value", "headers",
                        "GET /healthz HTTP/1.1\r\nHost: x\r\nX-Note: a\u0001b\r\nConnection: close\r\n\r\n"),
                Arguments.of("DEL in a header value", "headers",
                        "GET /healthz HTTP/1.1\r\nHost: x\r\nX-Note: a\u007fb\r\nConnection: close\r\n\r\n"),
                Arguments.of("%00 in a path parameter", "path",
                        "GET /v1/units/a%00b/estimates HTTP/1.1\r\nHost: x\r\nConnection: close\r\n\r\n"),
                Arguments.of("%00 at the end of a public path", "path",
                        "GET /healthz%00 HTTP/1.1\r\nHost: x\r\nConnection: close\r\n\r\n"),
                Arguments.of("bad percent-encoding in the path", "path",
                        "GET /v1/units/a%zzb/estimates HTTP/1.1\r\nHost: x\r\nConnection: close\r\n\r\n"),
                Arguments.of("request line without a target", "path", "GARBAGE\r\n\r\n"));
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("refusedBelowTheRouter")
    void a_request_refused_below_the_router_gets_a_problem_naming_the_part(String name, String field, String request) {
        Raw.Reply reply = Raw.exchange(server.app().port(), request.getBytes(StandardCharsets.ISO_8859_1));
        assertEquals(400, reply.status(), reply.toString());
        assertTrue(reply.isProblem(), reply.toString());
        assertEquals("/problems/invalid-input", reply.json().path("type").asText(), reply.toString());
        assertEquals(field, reply.field(), reply.toString());
        assertTrue(reply.json().path("errors").get(0).path("detail").asText().length() > 3, reply.toString());
        assertEquals(200, Raw.exchange(server.app().port(), Raw.request("GET", "/healthz", Map.of(), new byte[0])).status());
    }
}
