package backstate.reliability;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.Engine;
import backstate.api.TestServer;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.Map;
import java.util.function.UnaryOperator;
import java.util.stream.Stream;
import java.util.zip.GZIPOutputStream;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.AfterParameterizedClassInvocation;
import org.junit.jupiter.params.BeforeParameterizedClassInvocation;
import org.junit.jupiter.params.Parameter;
import org.junit.jupiter.params.ParameterizedClass;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.EnumSource;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Every input that once broke something at the HTTP edge, kept as a regression case (after
 * SQLite's harness): what it broke is in the case's name. Each must now get the stated 4xx as
 * problem+json naming the field, store nothing, and leave the server up, on either database engine.
 */
@ParameterizedClass
@EnumSource(Engine.class)
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class HostileInputRegressionTest {
    static final String TRACES = HostileRequests.TRACES;
    static final String CSV = "text/csv";

    TestServer server;
    ServerDb db;

    @Parameter
    Engine engine;
    /** Static, so it exists before the first invocation starts its server (SQLite's file goes here). */
    @TempDir
    static Path dir;

    @BeforeParameterizedClassInvocation
    void start() throws Exception {
        server = new TestServer(engine, dir, Map.of("BACKSTATE_MAX_BODY_BYTES", Integer.toString(HostileRequests.MAX_BODY)));
        db = new ServerDb(server.database());
        server.publishDemoModels();
    }

    @AfterParameterizedClassInvocation
    void stop() {
        server.close();
    }

    static Stream<Arguments> onceBroken() throws IOException {
        byte[] csv = HostileRequests.validCsv(0);
        String json = HostileRequests.text(HostileRequests.validJson(0));
        byte[] model = Files.readAllBytes(ReeferTraces.modelFile(TestServer.TEST_DATA));
        return Stream.of(
                // was a 400 blaming gzip on a body that was never gzip
                broke("body shorter than its Content-Length", 400, "body",
                        Raw.post(TRACES, Raw.headers("Content-Type", CSV, "Content-Length", Integer.toString(csv.length + 100)), csv)),
                // the next five were answered by Jetty's HTML error page, not problem+json
                broke("Content-Length not a number", 400, "Content-Length",
                        Raw.post(TRACES, Raw.headers("Content-Type", CSV, "Content-Length", "abc"), csv)),
                broke("two Content-Length headers", 400, "Content-Length",
                        Raw.request("POST", TRACES, Raw.headers("Content-Type", CSV, "Content-Length", "5", "content-length", "6"), csv)),
                broke("headers over Jetty's 8 KiB", 431, "headers",
                        Raw.post(TRACES, Raw.headers("Content-Type", CSV, "X-Padding", "p".repeat(9000)), csv)),
                broke("request line without a target", 400, "path", bytes("GARBAGE\r\n\r\n")),
                broke("request target with a raw 0xFF byte", 400, "path",
                        Raw.request("GET", "/v1/units/\u00ff/estimates", Map.of(), new byte[0])),
                broke("Transfer-Encoding gzip (chunked not last)", 400, "Transfer-Encoding",
                        Raw.request("POST", TRACES, Raw.headers("Content-Type", CSV, "Transfer-Encoding", "gzip"), csv)),
                // 505 is the protocol's own answer to an unknown version; it is kept, as problem+json
                broke("HTTP/9.9 request line", 505, null, bytes("POST " + TRACES + " HTTP/9.9\r\nHost: x\r\n\r\n")),
                // echoed a 300-character field name back in the problem
                broke("JSON field name of 300 characters", 400, "body",
                        Raw.post(TRACES, Raw.headers("Content-Type", "application/json"), bytes("{\"" + "k".repeat(300) + "\":[]}"))),
                // EOFException from an empty gzip stream escaped as a 500
                broke("Content-Encoding gzip on an empty body", 400, "Content-Encoding",
                        Raw.post(TRACES, Raw.headers("Content-Type", CSV, "Content-Encoding", "gzip"), new byte[0])),
                // the next three were taken with 202, keeping only the first gzip member's samples
                broke("gzip body whose second member is cut after 8 bytes", 400, "body",
                        Raw.post(TRACES, Raw.headers("Content-Type", CSV, "Content-Encoding", "gzip"),
                                twoMembers(csv, member -> Arrays.copyOf(member, 8)))),
                broke("gzip body with bytes after its last member", 400, "body",
                        Raw.post(TRACES, Raw.headers("Content-Type", CSV, "Content-Encoding", "gzip"),
                                twoMembers(csv, member -> bytes("not a gzip member")))),
                broke("gzip body whose second member's CRC-32 is wrong", 400, "body",
                        Raw.post(TRACES, Raw.headers("Content-Type", CSV, "Content-Encoding", "gzip"),
                                twoMembers(csv, member -> {
                                    member[member.length - 8] ^= 1; // RFC 1952 §2.3: CRC32, then ISIZE, end the member
                                    return member;
                                }))),
                // a null row in B reached the shape check as a NullPointerException (500)
                broke("model with a null row in b", 422, "b[0]",
                        Raw.post("/v1/models/reefer-40/versions", Raw.headers("Content-Type", "application/json"),
                                new String(model, StandardCharsets.UTF_8).replaceFirst("\"b\"\\s*:\\s*\\[\\s*\\[[^\\]]*\\]", "\"b\": [null")
                                        .getBytes(StandardCharsets.UTF_8))),
                // a second "time" array was appended to the first: two traces stored as one
                broke("JSON trace with time written twice", 400, "time",
                        Raw.post(TRACES, Raw.headers("Content-Type", "application/json"),
                                json.replaceFirst("\\{", "{\"time\":[0,60],").getBytes(StandardCharsets.UTF_8))),
                // accepted, then the job failed three times naming a numerical library's exception class
                broke("JSON trace with an output of 1e300", 400, "outputs.return_air[0]",
                        Raw.post(TRACES, Raw.headers("Content-Type", "application/json"),
                                json.replaceFirst("\"return_air\":\\s*\\[", "\"return_air\":[1e300,").getBytes(StandardCharsets.UTF_8))),
                // media types were matched by prefix
                broke("Content-Type text/csvfoo", 415, "Content-Type", Raw.post(TRACES, Raw.headers("Content-Type", "text/csvfoo"), csv)),
                broke("Content-Type application/jsonx", 415, "Content-Type",
                        Raw.post(TRACES, Raw.headers("Content-Type", "application/jsonx"), json.getBytes(StandardCharsets.UTF_8))));
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("onceBroken")
    void an_input_that_once_broke_the_edge_gets_a_problem_and_stores_nothing(String input, int status, String field,
                                                                            byte[] request) {
        String before = db.signature();
        Raw.Reply reply = Raw.exchange(server.app().port(), request);
        assertEquals(status, reply.status(), reply.toString());
        assertTrue(reply.isProblem(), reply.toString());
        assertEquals(field, reply.field(), reply.toString());
        assertEquals(before, db.signature());
        assertEquals(200, Raw.exchange(server.app().port(), Raw.request("GET", "/healthz", Map.of(), new byte[0])).status());
    }

    private static Arguments broke(String input, int status, String field, byte[] request) {
        return Arguments.of(input, status, field, request);
    }

    /** The CSV's first half as one gzip member, then its second half as another, changed by {@code damage}. */
    private static byte[] twoMembers(byte[] csv, UnaryOperator<byte[]> damage) throws IOException {
        int half = csv.length / 2;
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        out.write(gzip(Arrays.copyOfRange(csv, 0, half)));
        out.write(damage.apply(gzip(Arrays.copyOfRange(csv, half, csv.length))));
        return out.toByteArray();
    }

    private static byte[] gzip(byte[] plain) throws IOException {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        try (GZIPOutputStream gz = new GZIPOutputStream(out)) {
            gz.write(plain);
        }
        return out.toByteArray();
    }

    private static byte[] bytes(String s) {
        return s.getBytes(StandardCharsets.ISO_8859_1);
    }
}
