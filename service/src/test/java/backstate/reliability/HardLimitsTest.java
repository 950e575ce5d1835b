package backstate.reliability;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import java.util.function.Consumer;
import java.util.stream.Stream;
import java.util.zip.GZIPOutputStream;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Every hard limit, one request just past it: the answer is the stated 4xx as problem+json
 * naming the offending field (413 names none: the whole body is at fault), and nothing is stored.
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class HardLimitsTest {
    /** Small limits so a request past them stays small: 8 MiB bodies (above the 4 MiB model cap), 2 000 samples. */
    static final int MAX_BODY = 8 << 20;
    static final int MAX_SAMPLES = 2_000;
    static final String TRACES = "/v1/units/RCX-00001/traces" + Http.DEMO_VERSION_QUERY;
    static final String VERSIONS = "/v1/models/reefer-40/versions";
    static final String HEADER = ReeferTraces.CSV_HEADER;
    static final String ROW = "0,2.7,-0.7,6.4,27.1\n";
    private static final ObjectMapper JSON = new ObjectMapper();

    TestServer server;
    ServerDb db;

    @BeforeAll
    void start(@TempDir Path dir) throws Exception {
        server = new TestServer(dir, Map.of("BACKSTATE_MAX_BODY_BYTES", Integer.toString(MAX_BODY),
                "BACKSTATE_MAX_SAMPLES", Integer.toString(MAX_SAMPLES)));
        db = new ServerDb(dir.resolve("test.db"));
        server.publishDemoModels();
    }

    @AfterAll
    void stop() {
        server.close();
    }

    static Stream<Arguments> pastEachLimit() throws IOException {
        ReeferTraces reefer = new ReeferTraces(TestServer.TEST_DATA);
        return Stream.of(
                // body size, before and after decompression
                limit("body over max-body-bytes", 413, null, csv(HEADER + rows(MAX_BODY / ROW.length() + 10))),
                limit("Content-Length over max-body-bytes, refused unread", 413, null,
                        Raw.post(TRACES, Raw.headers("Content-Type", "text/csv", "Content-Length", "1000000000000"), bytes("time\n"))),
                limit("gzip bomb: 16 MiB of blank lines in a 16 KiB body", 413, null,
                        Raw.post(TRACES, Raw.headers("Content-Type", "text/csv", "Content-Encoding", "gzip"), gzip(bytes("\n".repeat(16 << 20))))),
                limit("Content-Length over the model body cap", 413, null, model(doc -> doc.put("description", "x".repeat(5 << 20)))),
                // samples
                limit("CSV with more rows than max-samples", 400, "time", csv(new String(reefer.csv(MAX_SAMPLES + 1, 1), StandardCharsets.UTF_8))),
                limit("JSON with more times than max-samples", 400, "time", json(new String(reefer.json(MAX_SAMPLES + 1, 1), StandardCharsets.UTF_8))),
                // JSON stream constraints
                // Every level is checked against the schema as it is read, so the depth limit (16) is a
                // backstop: a 10 000-deep body stops at its first wrong level, with no deep recursion.
                limit("JSON nested 10 000 deep", 400, "options.prior.mean[0]",
                        json("{\"options\":{\"prior\":{\"mean\":" + "[".repeat(10_000) + "]".repeat(10_000) + "}}}")),
                limit("JSON number longer than 64 characters", 400, "body", json("{\"time\":[0,1" + "0".repeat(80) + "]}")),
                limit("JSON string longer than 4096 characters", 400, "options.formulation", json("{\"options\":{\"formulation\":\"" + "x".repeat(5000) + "\"}}")),
                limit("JSON field name longer than 256 characters", 400, "body", json("{\"" + "k".repeat(300) + "\":[0]}")),
                // CSV records
                limit("CSV cell longer than 256 characters", 400, "line 2", csv(HEADER + "0," + "1".repeat(300) + ",-0.7,6.4,27.1\n")),
                limit("CSV row with more fields than channels", 400, "line 2", csv(HEADER + "0,2.7,-0.7,6.4,27.1,1\n")),
                limit("CSV channel name longer than 64 characters", 400, "header[1]", csv("time," + "a".repeat(65) + "\n0,1\n")),
                // names, keys and query parameters
                limit("unit ID longer than 64 characters", 400, "unitId",
                        Raw.post("/v1/units/" + "U".repeat(65) + "/traces" + Http.DEMO_VERSION_QUERY, Raw.headers("Content-Type", "text/csv"), bytes(HEADER + ROW))),
                limit("model name in the query longer than 64", 400, "model",
                        Raw.post("/v1/units/RCX-00001/traces?model=" + "m".repeat(65) + "&version=1", Raw.headers("Content-Type", "text/csv"), bytes(HEADER + ROW))),
                limit("version in the query past 9 digits", 400, "version",
                        Raw.post("/v1/units/RCX-00001/traces?model=reefer-40&version=" + "9".repeat(10), Raw.headers("Content-Type", "text/csv"), bytes(HEADER + ROW))),
                limit("Idempotency-Key longer than 128 characters", 400, "Idempotency-Key",
                        Raw.post(TRACES, Raw.headers("Content-Type", "text/csv", "Idempotency-Key", "k".repeat(129)), bytes(HEADER + ROW))),
                limit("headers over Jetty's 8 KiB", 431, "headers",
                        Raw.post(TRACES, Raw.headers("Content-Type", "text/csv", "X-Padding", "p".repeat(16 * 1024)), bytes(HEADER + ROW))),
                limit("family name longer than 64 characters", 400, "name",
                        Raw.post("/v1/models", Raw.headers("Content-Type", "application/json"), bytes("{\"name\":\"" + "f".repeat(65) + "\"}"))),
                limit("family description longer than 2000 characters", 400, "description",
                        Raw.post("/v1/models", Raw.headers("Content-Type", "application/json"), bytes("{\"name\":\"fam\",\"description\":\"" + "d".repeat(2001) + "\"}"))),
                // model size and text
                limit("model with 65 states", 422, "a", model(doc -> grow(doc, 65, 2, 2))),
                limit("model with 33 outputs", 422, "c", model(doc -> grow(doc, 4, 33, 2))),
                limit("model with 33 inputs", 422, "b", model(doc -> grow(doc, 4, 2, 33))),
                limit("state name longer than 64 characters", 400, "states[0].name",
                        model(doc -> ((ObjectNode) doc.withArray("states").get(0)).put("name", "s".repeat(65)))),
                limit("model description longer than 2000 characters", 400, "description",
                        model(doc -> doc.put("description", "d".repeat(2001)))),
                limit("unit of measure longer than 32 characters", 400, "states[0].unit",
                        model(doc -> ((ObjectNode) doc.withArray("states").get(0)).put("unit", "u".repeat(33)))));
    }

    @ParameterizedTest(name = "{0} gets {1} naming {2}")
    @MethodSource("pastEachLimit")
    void a_request_past_a_limit_gets_a_problem_naming_the_field_and_stores_nothing(String limit, int status,
                                                                                    String field, byte[] request) {
        String before = db.signature();
        Raw.Reply reply = Raw.exchange(server.app().port(), request);
        assertEquals(status, reply.status(), reply.toString());
        assertTrue(reply.isProblem(), reply.toString());
        assertEquals(status, reply.json().path("status").asInt(), reply.toString());
        assertEquals(field, reply.field(), reply.toString());
        assertEquals(before, db.signature());
    }

    private static Arguments limit(String name, int status, String field, byte[] request) {
        return Arguments.of(name, status, field, request);
    }

    private static byte[] csv(String body) {
        return Raw.post(TRACES, Raw.headers("Content-Type", "text/csv"), bytes(body));
    }

    private static byte[] json(String body) {
        return Raw.post(TRACES, Raw.headers("Content-Type", "application/json"), bytes(body));
    }

    /** A publish request for the demo model as changed by {@code change}. */
    private static byte[] model(Consumer<ObjectNode> change) throws IOException {
        ObjectNode doc = (ObjectNode) JSON.readTree(Files.readAllBytes(ReeferTraces.modelFile(TestServer.TEST_DATA)));
        change.accept(doc);
        return Raw.post(VERSIONS, Raw.headers("Content-Type", "application/json"), JSON.writeValueAsBytes(doc));
    }

    /** Resizes the demo model to n states, p outputs, m inputs: stable diagonal A, names to match. */
    private static void grow(ObjectNode doc, int n, int p, int m) {
        doc.set("a", matrix(n, n, true));
        doc.set("b", matrix(n, m, false));
        doc.set("c", matrix(p, n, false));
        doc.set("d", matrix(p, m, false));
        doc.set("states", names("x", n, false));
        doc.set("outputs", names("y", p, true));
        doc.set("inputs", names("u", m, false));
    }

    private static ArrayNode matrix(int rows, int cols, boolean diagonal) {
        ArrayNode out = JSON.createArrayNode();
        for (int i = 0; i < rows; i++) {
            ArrayNode row = out.addArray();
            for (int j = 0; j < cols; j++) {
                row.add(diagonal ? (i == j ? -0.001 : 0.0) : (i == j ? 1.0 : 0.0));
            }
        }
        return out;
    }

    private static ArrayNode names(String prefix, int count, boolean sigma) {
        ArrayNode out = JSON.createArrayNode();
        for (int i = 0; i < count; i++) {
            ObjectNode q = out.addObject().put("name", prefix + i).put("unit", "1");
            if (sigma) {
                q.put("noiseSigma", 0.1);
            }
        }
        return out;
    }

    private static String rows(int count) {
        StringBuilder s = new StringBuilder();
        for (int k = 0; k < count; k++) {
            s.append(k * 60).append(",2.7,-0.7,6.4,27.1\n");
        }
        return s.toString();
    }

    private static byte[] bytes(String s) {
        return s.getBytes(StandardCharsets.UTF_8);
    }

    private static byte[] gzip(byte[] plain) throws IOException {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        try (GZIPOutputStream z = new GZIPOutputStream(out)) {
            z.write(plain);
        }
        return out.toByteArray();
    }
}
