package backstate.reliability;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.Comparator;
import java.util.List;
import java.util.Map;
import java.util.Random;
import java.util.stream.Stream;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.Combinators;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;
import net.jqwik.api.lifecycle.AfterContainer;
import net.jqwik.api.lifecycle.BeforeContainer;

/**
 * Random byte-level mutations of valid traces, and random value changes in a valid model
 * document. A mutation may leave the input valid, so the oracle is consistency, not refusal:
 * a 2xx stores exactly one new row set (a traced job that then finishes; one model version),
 * a 4xx is problem+json and stores nothing, and no answer is a 5xx or a hang.
 */
class MutatedInputFuzzTest {
    /** Bound on waiting for an accepted trace's job: far beyond a 24-sample solve. */
    static final Duration JOB_WAIT = Duration.ofSeconds(30);
    private static final ObjectMapper MAPPER = new ObjectMapper();
    private static final List<byte[]> BASES = List.of(HostileRequests.validCsv(5), HostileRequests.validJson(5));
    private static final List<String> ODD_VALUES = List.of("null", "[]", "[null]", "[[null]]", "\"x\"", "1", "-1", "0",
            "1e308", "-1e308", "1e-308", "[[1e308]]", "{}", "[[]]", "[[1,2],[3]]", "true", "\"continuous\"", "\"discrete\"",
            "[{\"name\":\"x\"}]", "[{\"name\":\"x\",\"unit\":\"1\",\"noiseSigma\":-1}]", "0.5", "5");
    private static final List<String> MODEL_FIELDS = List.of("description", "timeDomain", "samplePeriod", "states", "outputs",
            "inputs", "a", "b", "c", "d", "extra");

    private static Path dir;
    private static TestServer server;
    private static ServerDb db;
    private static byte[] model;

    @BeforeContainer
    static void start() throws Exception {
        dir = Files.createTempDirectory("backstate-mutations");
        server = new TestServer(dir, Map.of("BACKSTATE_MAX_BODY_BYTES", Integer.toString(HostileRequests.MAX_BODY)));
        db = new ServerDb(dir.resolve("test.db"));
        server.publishDemoModels();
        model = Files.readAllBytes(ReeferTraces.modelFile(TestServer.TEST_DATA));
    }

    @AfterContainer
    static void stop() throws IOException {
        server.close();
        try (Stream<Path> files = Files.walk(dir)) {
            files.sorted(Comparator.reverseOrder()).forEach(p -> p.toFile().delete());
        }
    }

    @Property(tries = 150)
    void a_mutated_trace_is_stored_and_solved_once_or_refused_never_a_5xx(@ForAll("mutatedTraces") HostileTracePostFuzzTest.Hostile post)
            throws InterruptedException {
        long traces = db.count("SELECT COUNT(*) FROM traces");
        String before = db.signature();
        Raw.Reply reply = Raw.exchange(server.app().port(), post.request());
        if (reply.status() == 202) {
            JsonNode accepted = reply.json();
            String state = awaitJob(accepted.path("jobId").asText());
            assertTrue(state.equals("succeeded") || state.equals("failed"), state);
            assertEquals(traces + 1, db.count("SELECT COUNT(*) FROM traces"));
            assertEquals(1, db.count("SELECT COUNT(*) FROM traces WHERE id = '" + accepted.path("traceId").asText() + "'"));
            assertEquals(state.equals("succeeded") ? 1 : 0,
                    db.count("SELECT COUNT(*) FROM estimates WHERE job_id = '" + accepted.path("jobId").asText() + "'"));
        } else {
            assertRefusal(reply);
            assertEquals(before, db.signature(), "the database changed");
        }
        HostileTracePostFuzzTest.assertServerUp(server);
    }

    @Property(tries = 100)
    void a_mutated_model_is_published_once_or_refused_never_a_5xx(@ForAll("mutatedModels") String document) {
        long versions = db.count("SELECT COUNT(*) FROM model_versions");
        String before = db.signature();
        Raw.Reply reply = Raw.exchange(server.app().port(), Raw.post("/v1/models/reefer-40/versions",
                Raw.headers("Content-Type", "application/json"), document.getBytes(StandardCharsets.UTF_8)));
        if (reply.status() == 201) {
            assertEquals(versions + 1, db.count("SELECT COUNT(*) FROM model_versions"));
        } else {
            assertRefusal(reply);
            assertEquals(before, db.signature(), "the database changed");
        }
        HostileTracePostFuzzTest.assertServerUp(server);
    }

    private static void assertRefusal(Raw.Reply reply) {
        assertTrue(reply.status() >= 400 && reply.status() < 500, () -> "expected 2xx or 4xx, got " + reply);
        assertTrue(reply.isProblem(), () -> "expected problem+json, got " + reply);
    }

    @Provide
    Arbitrary<HostileTracePostFuzzTest.Hostile> mutatedTraces() {
        return Combinators.combine(Arbitraries.of(0, 1), Arbitraries.integers().between(1, 4), Arbitraries.longs())
                .as((which, edits, seed) -> {
                    byte[] mutated = mutate(BASES.get(which), edits, new Random(seed));
                    return new HostileTracePostFuzzTest.Hostile(edits + " byte edits, seed " + seed, HostileRequests.TRACES,
                            Raw.headers("Content-Type", which == 0 ? "text/csv" : "application/json"), mutated);
                });
    }

    @Provide
    Arbitrary<String> mutatedModels() {
        Arbitrary<String> fieldChange = Combinators.combine(Arbitraries.of(MODEL_FIELDS), Arbitraries.of(ODD_VALUES))
                .as((field, value) -> setField(field, value));
        Arbitrary<String> entryChange = Combinators.combine(Arbitraries.of("a", "b", "c", "d"), Arbitraries.integers().between(0, 3),
                        Arbitraries.integers().between(0, 3), Arbitraries.of("1e308", "-1e308", "5", "1e-300", "null", "\"1\"", "[1]", "0"))
                .as(MutatedInputFuzzTest::setEntry);
        Arbitrary<String> removal = Arbitraries.of(MODEL_FIELDS).map(MutatedInputFuzzTest::removeField);
        return Arbitraries.oneOf(fieldChange, entryChange, removal);
    }

    private static byte[] mutate(byte[] base, int edits, Random random) {
        byte[] body = base.clone();
        for (int e = 0; e < edits; e++) {
            int at = random.nextInt(body.length);
            ByteArrayOutputStream out = new ByteArrayOutputStream();
            switch (random.nextInt(3)) {
                case 0 -> { // overwrite with a byte from the body's own alphabet or any byte
                    body[at] = random.nextBoolean() ? body[random.nextInt(body.length)] : (byte) random.nextInt(256);
                    continue;
                }
                case 1 -> { // insert
                    out.write(body, 0, at);
                    out.write(random.nextBoolean() ? body[random.nextInt(body.length)] : random.nextInt(256));
                    out.write(body, at, body.length - at);
                }
                default -> { // delete
                    out.write(body, 0, at);
                    out.write(body, at + 1, body.length - at - 1);
                }
            }
            body = out.toByteArray();
        }
        return body;
    }

    private static ObjectNode modelTree() {
        try {
            return (ObjectNode) MAPPER.readTree(model);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    private static String setField(String field, String rawValue) {
        String without = removeField(field);
        return without.substring(0, without.lastIndexOf('}')) + ",\"" + field + "\":" + rawValue + "}";
    }

    private static String removeField(String field) {
        ObjectNode doc = modelTree();
        doc.remove(field);
        return doc.toString();
    }

    private static String setEntry(String matrix, int row, int column, String rawValue) {
        ObjectNode doc = modelTree();
        ArrayNode rows = (ArrayNode) doc.get(matrix);
        ArrayNode r = (ArrayNode) rows.get(row % rows.size());
        String marker = "\"__entry__\"";
        r.set(column % r.size(), "__entry__");
        return doc.toString().replace(marker, rawValue);
    }

    private static String awaitJob(String jobId) throws InterruptedException {
        long deadline = System.nanoTime() + JOB_WAIT.toNanos();
        while (System.nanoTime() < deadline) {
            List<String> state = db.strings("SELECT state FROM jobs WHERE id = '" + jobId + "'");
            if (!state.isEmpty() && !state.get(0).equals("queued") && !state.get(0).equals("running")) {
                return state.get(0);
            }
            Thread.sleep(5);
        }
        throw new AssertionError("job " + jobId + " not finished within " + JOB_WAIT);
    }
}
