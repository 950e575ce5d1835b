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
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import java.util.function.UnaryOperator;
import java.util.stream.Stream;
import java.util.zip.GZIPOutputStream;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.Combinators;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;
import net.jqwik.api.lifecycle.AfterContainer;
import net.jqwik.api.lifecycle.BeforeContainer;

/**
 * Generated hostile trace posts thrown at a real server on loopback: malformed JSON and CSV
 * bodies, and valid bodies under odd headers (Content-Type, Content-Encoding with broken gzip,
 * lying Content-Length, broken chunking, Idempotency-Key garbage, bad query). Each of these is
 * malformed by construction, so every answer must be a 4xx problem+json, the database signature
 * must not move, and the server must still answer. Inputs that once broke something are kept in
 * {@link HostileInputRegressionTest}.
 */
class HostileTracePostFuzzTest {
    static final String JSON_TYPE = "application/json";
    static final String CSV_TYPE = "text/csv";
    static final Set<String> TOP_FIELDS = Set.of("time", "outputs", "inputs", "noiseSigma", "options");
    static final Set<String> CHANNELS = Set.of("time", "return_air", "supply_air", "cooling_power", "ambient");
    private static final ObjectMapper MAPPER = new ObjectMapper();
    private static final Pattern NUMBER = Pattern.compile("-?\\d+(\\.\\d+)?");
    private static final List<String> JSON_BASES = List.of(
            HostileRequests.text(HostileRequests.validJson(1)), HostileRequests.text(HostileRequests.validJson(2)));
    private static final List<String> CSV_BASES = List.of(
            HostileRequests.text(HostileRequests.validCsv(1)), HostileRequests.text(HostileRequests.validCsv(2)));

    private static Path dir;
    private static TestServer server;
    private static ServerDb db;

    /** One generated request, printed readably when a property fails. */
    record Hostile(String how, String target, Map<String, byte[]> headers, byte[] body) {
        byte[] request() {
            return Raw.post(target, headers, body);
        }

        @Override
        public String toString() {
            StringBuilder h = new StringBuilder();
            headers.forEach((k, v) -> h.append(k).append(": ").append(HostileRequests.preview(v)).append("; "));
            return how + " | " + target + " | " + h + "| " + HostileRequests.preview(body);
        }
    }

    @BeforeContainer
    static void start() throws Exception {
        dir = Files.createTempDirectory("backstate-fuzz");
        server = new TestServer(dir, Map.of("BACKSTATE_MAX_BODY_BYTES", Integer.toString(HostileRequests.MAX_BODY)));
        db = new ServerDb(dir.resolve("test.db"));
        server.publishDemoModels();
    }

    @AfterContainer
    static void stop() throws IOException {
        server.close();
        try (Stream<Path> files = Files.walk(dir)) {
            files.sorted(Comparator.reverseOrder()).forEach(p -> p.toFile().delete());
        }
    }

    @Property(tries = 200)
    void a_malformed_json_trace_gets_a_4xx_problem_and_stores_nothing(@ForAll("malformedJson") Hostile post) {
        assertRefusedAndNothingStored(post);
    }

    @Property(tries = 200)
    void a_malformed_csv_trace_gets_a_4xx_problem_and_stores_nothing(@ForAll("malformedCsv") Hostile post) {
        assertRefusedAndNothingStored(post);
    }

    @Property(tries = 200)
    void a_valid_trace_under_an_odd_header_gets_a_4xx_problem_and_stores_nothing(@ForAll("oddHeaders") Hostile post) {
        assertRefusedAndNothingStored(post);
    }

    private static void assertRefusedAndNothingStored(Hostile post) {
        String before = db.signature();
        Raw.Reply reply = Raw.exchange(server.app().port(), post.request());
        assertTrue(reply.status() >= 400 && reply.status() < 500, () -> "expected a 4xx, got " + reply);
        assertTrue(reply.isProblem(), () -> "expected problem+json, got " + reply);
        assertEquals(reply.status(), reply.json().path("status").asInt(), reply::toString);
        assertEquals(before, db.signature(), "the database changed");
        assertServerUp(server);
    }

    static void assertServerUp(TestServer server) {
        Raw.Reply health = Raw.exchange(server.app().port(), Raw.request("GET", "/healthz", Map.of(), new byte[0]));
        assertEquals(200, health.status(), "server no longer healthy: " + health);
    }

    // ---- malformed JSON: every one breaks the syntax, a type, a name or a shape

    @Provide
    Arbitrary<Hostile> malformedJson() {
        Arbitrary<String> base = Arbitraries.of(JSON_BASES);
        return Arbitraries.oneOf(
                base.flatMap(b -> Arbitraries.integers().between(0, b.length() - 1)
                        .map(n -> json("cut after " + n + " chars", b.substring(0, n)))),
                Combinators.combine(base, Arbitraries.of("x", "}", "]", "{}", "[", "1", "\"s\"", ",", "\u0000", "{\"time\":[]}"))
                        .as((b, t) -> json("trailing " + t, b + t)),
                Combinators.combine(base, Arbitraries.integers().between(0, 10_000), Arbitraries.of(NOT_JSON_NUMBERS))
                        .as((b, i, token) -> json("number " + i + " became " + token, replaceMatch(b, NUMBER, i, token))),
                Combinators.combine(base, Arbitraries.of("time", "outputs", "inputs"), Arbitraries.of(WRONG_COLUMN_VALUES))
                        .filter((b, f, v) -> !(f.equals("outputs") && v.equals("{}"))) // no outputs: valid, all missing
                        .as((b, f, v) -> json(f + " set to " + v, withField(without(b, f), f, v))),
                Combinators.combine(base, Arbitraries.of(BAD_NOISE_SIGMA)).as((b, v) -> json("noiseSigma " + v, withField(b, "noiseSigma", v))),
                Combinators.combine(base, Arbitraries.of(BAD_OPTIONS)).as((b, v) -> json("options " + v, withField(b, "options", v))),
                Combinators.combine(base, unknownName(TOP_FIELDS)).as((b, n) -> json("unknown field " + n, withField(b, n, "[]"))),
                Combinators.combine(base, Arbitraries.of("outputs", "inputs"), unknownName(CHANNELS))
                        .as((b, group, n) -> json("unknown channel " + group + "." + n, withChannel(b, group, n))),
                Combinators.combine(base, Arbitraries.of("time", "outputs", "inputs"))
                        .as((b, f) -> json("field " + f + " twice", withField(b, f, fieldValue(b, f)))),
                Combinators.combine(base, Arbitraries.of(BAD_UTF8)).as((b, bad) -> jsonBytes("invalid UTF-8 in a name",
                        splice(b, b.indexOf("time") + 2, bad))),
                Arbitraries.of(NOT_A_TRACE_OBJECT).map(v -> json("not a trace object: " + v, v)),
                base.map(b -> json("two times swapped", swapTimes(b))),
                Combinators.combine(base, Arbitraries.of("ambient", "cooling_power"))
                        .as((b, ch) -> json("input " + ch + " missing", withoutChannel(b, "inputs", ch))),
                Combinators.combine(base, Arbitraries.of("time", "return_air", "ambient"))
                        .as((b, ch) -> json(ch + " one value short", dropLastValue(b, ch))),
                Arbitraries.strings().ofMaxLength(300).map(s -> json("random text", s)),
                Arbitraries.bytes().array(byte[].class).ofMaxSize(300).map(bytes -> new Hostile("random bytes",
                        HostileRequests.TRACES, Raw.headers("Content-Type", JSON_TYPE), bytes)));
    }

    // ---- malformed CSV

    @Provide
    Arbitrary<Hostile> malformedCsv() {
        Arbitrary<String> base = Arbitraries.of(CSV_BASES);
        Arbitrary<Integer> row = Arbitraries.integers().between(1, HostileRequests.SAMPLES);
        Arbitrary<Integer> column = Arbitraries.integers().between(0, 4);
        return Arbitraries.oneOf(
                Combinators.combine(base, column, unknownName(CHANNELS))
                        .as((b, c, n) -> csv("header[" + c + "] renamed " + n, setCell(b, 0, c, n))),
                Combinators.combine(base, Arbitraries.integers().between(1, 4))
                        .as((b, c) -> csv("header[" + c + "] repeats header[" + (c % 4 + 1) + "]",
                                setCell(b, 0, c, cell(b, 0, c % 4 + 1)))),
                base.map(b -> csv("time column removed", removeColumn(b, 0))),
                Combinators.combine(base, row, column, Arbitraries.of(NOT_CSV_NUMBERS))
                        .as((b, r, c, t) -> csv("cell " + r + "," + c + " became " + t, setCell(b, r, c, t))),
                Combinators.combine(base, row, Arbitraries.of(0, 3, 4), Arbitraries.of("", "  "))
                        .as((b, r, c, t) -> csv("time/input cell " + r + "," + c + " empty", setCell(b, r, c, t))),
                Combinators.combine(base, row).as((b, r) -> csv("row " + r + " has an extra field", editLine(b, r, l -> l + ",1"))),
                Combinators.combine(base, row).as((b, r) -> csv("row " + r + " lacks a field",
                        editLine(b, r, l -> l.substring(0, l.lastIndexOf(','))))),
                Combinators.combine(base, row).as((b, r) -> csv("row " + r + " opens a quote it never closes",
                        editLine(b, r, l -> "\"" + l))),
                Combinators.combine(base, row, column).as((b, r, c) -> csv("text after a closing quote at " + r + "," + c,
                        setCell(b, r, c, "\"" + cell(b, r, c) + "\"x"))),
                Combinators.combine(base, row, column).as((b, r, c) -> csv("cell " + r + "," + c + " over 256 chars",
                        setCell(b, r, c, "1".repeat(300)))),
                Combinators.combine(base, row, Arbitraries.integers().between(1, 4), Arbitraries.of(BAD_UTF8))
                        .as((b, r, c, bad) -> new Hostile("invalid UTF-8 in cell " + r + "," + c, HostileRequests.TRACES,
                                Raw.headers("Content-Type", CSV_TYPE), splice(setCell(b, r, c, "#"), cellStart(b, r, c), bad, 1))),
                base.map(b -> csv("two times swapped", swapRows(b, 1, 2))),
                base.map(b -> csv("header only", b.substring(0, b.indexOf('\n') + 1))),
                Arbitraries.of("", "\n", "\r\n\r\n", ",,,,", "time\n", "time,ambient\n0,1\n").map(s -> csv("degenerate " + s, s)),
                Arbitraries.strings().ofMaxLength(300).map(s -> csv("random text", s)),
                Arbitraries.bytes().array(byte[].class).ofMaxSize(300).map(bytes -> new Hostile("random bytes",
                        HostileRequests.TRACES, Raw.headers("Content-Type", CSV_TYPE), bytes)));
    }

    // ---- valid bodies under odd headers

    @Provide
    Arbitrary<Hostile> oddHeaders() {
        byte[] csv = HostileRequests.validCsv(3);
        byte[] json = HostileRequests.validJson(3);
        Arbitrary<String> randomHeaderText = Arbitraries.strings().withCharRange((char) 0x20, (char) 0xff).ofMaxLength(80);
        return Arbitraries.oneOf(
                Arbitraries.oneOf(Arbitraries.of(BAD_CONTENT_TYPES), randomHeaderText.filter(t -> !acceptedType(t)))
                        .map(t -> new Hostile("Content-Type " + t, HostileRequests.TRACES, latin1("Content-Type", t), csv)),
                Arbitraries.just(new Hostile("no Content-Type", HostileRequests.TRACES, Map.of(), csv)),
                Arbitraries.just(new Hostile("CSV sent as JSON", HostileRequests.TRACES, Raw.headers("Content-Type", JSON_TYPE), csv)),
                Arbitraries.just(new Hostile("JSON sent as CSV", HostileRequests.TRACES, Raw.headers("Content-Type", CSV_TYPE), json)),
                Arbitraries.bytes().array(byte[].class).ofMinSize(0).ofMaxSize(200).filter(b -> b.length < 2 || b[0] != 0x1f)
                        .map(b -> gzipped("gzip declared, random bytes sent", b)),
                Arbitraries.integers().between(0, gzip(csv).length - 9)
                        .map(n -> gzipped("gzip cut after " + n + " bytes", Arrays.copyOf(gzip(csv), n))),
                Combinators.combine(Arbitraries.integers().between(10, gzip(csv).length - 1), Arbitraries.integers().between(1, 255))
                        .as((at, x) -> {
                            byte[] g = gzip(csv);
                            g[at] ^= x.byteValue();
                            return gzipped("gzip byte " + at + " flipped by " + x, g);
                        }),
                Arbitraries.oneOf(Arbitraries.of(BAD_ENCODINGS), Arbitraries.strings().alpha().ofMinLength(1).ofMaxLength(12)
                                .filter(e -> !e.equalsIgnoreCase("gzip") && !e.equalsIgnoreCase("identity")))
                        .map(e -> new Hostile("Content-Encoding " + e, HostileRequests.TRACES,
                                Raw.headers("Content-Type", CSV_TYPE, "Content-Encoding", e), csv)),
                Arbitraries.integers().between(1, 5000).map(extra -> new Hostile("Content-Length " + extra + " over the body",
                        HostileRequests.TRACES, Raw.headers("Content-Type", CSV_TYPE, "Content-Length",
                        Integer.toString(csv.length + extra)), csv)),
                Arbitraries.integers().between(0, json.length - 1).map(n -> new Hostile("Content-Length " + n + " cuts the JSON",
                        HostileRequests.TRACES, Raw.headers("Content-Type", JSON_TYPE, "Content-Length", Integer.toString(n)), json)),
                Arbitraries.longs().between(HostileRequests.MAX_BODY + 1L, Long.MAX_VALUE).map(n -> new Hostile(
                        "Content-Length " + n + " over the limit", HostileRequests.TRACES,
                        Raw.headers("Content-Type", CSV_TYPE, "Content-Length", Long.toString(n)), csv)),
                Arbitraries.of(BAD_CONTENT_LENGTHS).map(v -> new Hostile("Content-Length " + v, HostileRequests.TRACES,
                        Raw.headers("Content-Type", CSV_TYPE, "Content-Length", v), csv)),
                Arbitraries.of(BROKEN_CHUNKS).map(c -> new Hostile("chunked " + c, HostileRequests.TRACES,
                        Raw.headers("Content-Type", CSV_TYPE, "Transfer-Encoding", "chunked"), c.getBytes(StandardCharsets.ISO_8859_1))),
                Arbitraries.just(new Hostile("chunked and Content-Length", HostileRequests.TRACES,
                        Raw.headers("Content-Type", CSV_TYPE, "Transfer-Encoding", "chunked", "Content-Length", Integer.toString(csv.length)), csv)),
                badIdempotencyKeys().map(k -> new Hostile("Idempotency-Key " + HostileRequests.preview(k), HostileRequests.TRACES,
                        withHeader(Raw.headers("Content-Type", CSV_TYPE), "Idempotency-Key", k), csv)),
                Arbitraries.of(BAD_QUERIES).map(q -> new Hostile("query " + q, "/v1/units/RCX-00001/traces" + q,
                        Raw.headers("Content-Type", CSV_TYPE), csv)),
                Arbitraries.of(BAD_UNIT_IDS).map(u -> new Hostile("unit " + u, "/v1/units/" + u + "/traces" + Http.DEMO_VERSION_QUERY,
                        Raw.headers("Content-Type", CSV_TYPE), csv)));
    }

    private static Arbitrary<byte[]> badIdempotencyKeys() {
        Arbitrary<String> visible = Arbitraries.strings().withCharRange('!', '~').ofMinLength(1).ofMaxLength(60);
        return Arbitraries.oneOf(
                Arbitraries.just(new byte[0]),
                Arbitraries.strings().withCharRange('!', '~').ofMinLength(129).ofMaxLength(2000).map(HostileTracePostFuzzTest::latin1Bytes),
                Combinators.combine(visible, visible, Arbitraries.of(" ", "\t")).as((a, b, gap) -> latin1Bytes(a + gap + b)),
                Combinators.combine(visible, Arbitraries.integers().between(0x80, 0xff)).as((a, c) -> latin1Bytes(a + (char) (int) c)),
                Combinators.combine(visible, Arbitraries.of(1, 2, 8, 11, 12, 27, 127)).as((a, c) -> latin1Bytes((char) (int) c + a)));
    }

    // ---- value lists: every entry is wrong where it is put

    static final List<String> NOT_JSON_NUMBERS = List.of("\"1\"", "true", "false", "{}", "[]", "[1]", "NaN", "Infinity",
            "-Infinity", "1e999", "-1e999", "0x10", "01", ".5", "1.", "+1", "--1", "1e", "", "1" + "0".repeat(70), "'1'",
            "1_000", "\u0661");
    static final List<String> WRONG_COLUMN_VALUES = List.of("\"x\"", "1", "true", "null", "[]", "{}", "[[1]]", "{\"a\":1}");
    static final List<String> BAD_NOISE_SIGMA = List.of("[]", "\"x\"", "{\"return_air\":-1}", "{\"return_air\":0}",
            "{\"return_air\":\"a\"}", "{\"door\":1}", "{\"return_air\":1e999}", "{\"return_air\":null}");
    static final List<String> BAD_OPTIONS = List.of("[]", "\"x\"", "1", "{\"formulation\":\"nope\"}",
            "{\"estimateOffsets\":\"yes\"}", "{\"referenceTime\":\"x\"}", "{\"referenceTime\":1e12}", "{\"unknown\":1}",
            "{\"prior\":{\"mean\":[1]}}", "{\"prior\":{\"mean\":[0,0,0,0],\"covariance\":[[1]]}}",
            "{\"prior\":{\"mean\":[1],\"covariance\":[[1,0,0,0],[0,1,0,0],[0,0,1,0],[0,0,0,1]]}}",
            "{\"prior\":{\"mean\":[0,0,0,0],\"covariance\":[[-1,0,0,0],[0,1,0,0],[0,0,1,0],[0,0,0,1]]}}",
            "{\"prior\":{\"mean\":[0,0,0,0],\"covariance\":[[1,0,0,0],null,[0,0,1,0],[0,0,0,1]]}}",
            "{\"prior\":{\"mean\":[0,0,0,0],\"covariance\":[[0,0,0,0],[0,0,0,0],[0,0,0,0],[0,0,0,0]]}}",
            "{\"prior\":{\"mean\":[0,0,0,0],\"covariance\":[[1,5,0,0],[0,1,0,0],[0,0,1,0],[0,0,0,1]]}}");
    static final List<String> NOT_A_TRACE_OBJECT = List.of("", " ", "[]", "[{}]", "1", "\"trace\"", "null", "true", "{",
            "}", "{}", "{\"time\":[]}", "\u0000", "{\"time\":[0],\"outputs\":{},\"inputs\":{}}");
    static final List<byte[]> BAD_UTF8 = List.of(new byte[] {(byte) 0xff}, new byte[] {(byte) 0xc3, 0x28},
            new byte[] {(byte) 0xe2, (byte) 0x82}, new byte[] {(byte) 0xf0, 0x28, (byte) 0x8c, (byte) 0xbc},
            new byte[] {(byte) 0xc0, (byte) 0xaf}, new byte[] {(byte) 0xed, (byte) 0xa0, (byte) 0x80}, new byte[] {(byte) 0x80});
    static final List<String> NOT_CSV_NUMBERS = List.of("NaN", "nan", "Infinity", "inf", "-inf", "1e", "--1", "0x10", "1d",
            "1f", "abc", "1 2", "1e999", "-1e999", "\u0661\u0662", "1,5", "\"", "1\u00002", "\u00bd", "1e+", "+-1", ".", "-",
            "e5", "1.2.3", "#", "1;2");
    static final List<String> BAD_CONTENT_TYPES = List.of("", "text/plain", "application/xml", "text/xml",
            "multipart/form-data; boundary=x", "application/x-www-form-urlencoded", "*/*", "text/cvs", "application/jsn",
            "text", "json", "csv", "application/octet-stream", "text/html", ";", "application", "/");
    static final List<String> BAD_ENCODINGS = List.of("br", "deflate", "compress", "zstd", "x-gzip", "gzip, identity",
            "identity, gzip", "gzip;q=1", "*", "chunked", ",", "gzip gzip");
    static final List<String> BAD_CONTENT_LENGTHS = List.of("abc", "-1", "1e3", "0x10", "1 0", "+10", "99999999999999999999999",
            "", "1.5", "١٠");
    static final List<String> BROKEN_CHUNKS = List.of("zz\r\nhello\r\n0\r\n\r\n", "100\r\ntime,return_air\n",
            "5\r\ntime,\r\n", "5\r\ntime,,,,,\r\n0\r\n\r\n", "-1\r\n\r\n", "5;ext\r\ntime\r\n0\r\n\r\n", "\r\n\r\n",
            "ffffffffffffffffff\r\n", "0\r\n\r\n");
    static final List<String> BAD_QUERIES = List.of("", "?model=reefer-40", "?version=1", "?model=reefer-40&version=0",
            "?model=reefer-40&version=-1", "?model=reefer-40&version=99", "?model=reefer-40&version=1.0",
            "?model=reefer-40&version=one", "?model=nope&version=1", "?model=&version=1", "?model=reefer-40&version=1e0",
            "?model=reefer%2D40%00&version=1", "?model=..%2F..&version=1", "?model=reefer-40&version=1&formulation=nope",
            "?model=reefer-40&version=1&estimateOffsets=maybe", "?model=reefer-40&version=1&referenceTime=abc",
            "?model=reefer-40&version=1&referenceTime=1e999", "?model=reefer-40&version=1&referenceTime=-5");
    static final List<String> BAD_UNIT_IDS = List.of("-x", ".", "..", "%2E%2E", "a%2Fb", "a%00b", "%20", "a%20b", "_x",
            "x".repeat(65), "%C3%A9", "a;b", "a%5Cb");

    // ---- helpers that build and break bodies

    private static boolean acceptedType(String t) {
        String lower = t.trim().toLowerCase(Locale.ROOT);
        return lower.startsWith("application/json") || lower.startsWith("text/csv");
    }

    private static Arbitrary<String> unknownName(Set<String> known) {
        return Arbitraries.strings().alpha().numeric().withChars('_').ofMinLength(1).ofMaxLength(20).filter(n -> !known.contains(n));
    }

    private static Hostile json(String how, String body) {
        return new Hostile(how, HostileRequests.TRACES, Raw.headers("Content-Type", JSON_TYPE), body.getBytes(StandardCharsets.UTF_8));
    }

    private static Hostile jsonBytes(String how, byte[] body) {
        return new Hostile(how, HostileRequests.TRACES, Raw.headers("Content-Type", JSON_TYPE), body);
    }

    private static Hostile csv(String how, String body) {
        return new Hostile(how, HostileRequests.TRACES, Raw.headers("Content-Type", CSV_TYPE), body.getBytes(StandardCharsets.UTF_8));
    }

    private static Hostile gzipped(String how, byte[] body) {
        return new Hostile(how, HostileRequests.TRACES, Raw.headers("Content-Type", CSV_TYPE, "Content-Encoding", "gzip"), body);
    }

    private static Map<String, byte[]> latin1(String name, String value) {
        return withHeader(new LinkedHashMap<>(), name, latin1Bytes(value));
    }

    private static Map<String, byte[]> withHeader(Map<String, byte[]> headers, String name, byte[] value) {
        Map<String, byte[]> all = new LinkedHashMap<>(headers);
        all.put(name, value);
        return all;
    }

    private static byte[] latin1Bytes(String s) {
        return s.getBytes(StandardCharsets.ISO_8859_1);
    }

    private static String replaceMatch(String body, Pattern pattern, int index, String replacement) {
        List<int[]> spans = new ArrayList<>();
        Matcher m = pattern.matcher(body);
        while (m.find()) {
            spans.add(new int[] {m.start(), m.end()});
        }
        int[] span = spans.get(index % spans.size());
        return body.substring(0, span[0]) + replacement + body.substring(span[1]);
    }

    private static ObjectNode tree(String body) {
        try {
            return (ObjectNode) MAPPER.readTree(body);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    private static String write(ObjectNode node) {
        try {
            return MAPPER.writeValueAsString(node);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    private static String without(String body, String field) {
        ObjectNode t = tree(body);
        t.remove(field);
        return write(t);
    }

    /** Appends {@code "name": raw} before the closing brace, raw JSON text as given. */
    private static String withField(String body, String name, String raw) {
        String head = body.substring(0, body.lastIndexOf('}'));
        return head + (head.endsWith("{") ? "" : ",") + "\"" + name + "\":" + raw + "}";
    }

    private static String fieldValue(String body, String field) {
        return tree(body).get(field).toString();
    }

    private static String withChannel(String body, String group, String name) {
        ObjectNode t = tree(body);
        ((ObjectNode) t.get(group)).set(name, t.get("time").deepCopy());
        return write(t);
    }

    private static String withoutChannel(String body, String group, String name) {
        ObjectNode t = tree(body);
        ((ObjectNode) t.get(group)).remove(name);
        return write(t);
    }

    private static String dropLastValue(String body, String channel) {
        ObjectNode t = tree(body);
        ArrayNode column = channel.equals("time") ? (ArrayNode) t.get("time")
                : (ArrayNode) (t.get("outputs").has(channel) ? t.get("outputs") : t.get("inputs")).get(channel);
        column.remove(column.size() - 1);
        return write(t);
    }

    private static String swapTimes(String body) {
        ObjectNode t = tree(body);
        ArrayNode time = (ArrayNode) t.get("time");
        JsonNode first = time.get(1);
        time.set(1, time.get(2));
        time.set(2, first);
        return write(t);
    }

    private static byte[] splice(String body, int at, byte[] insert) {
        return splice(body.getBytes(StandardCharsets.UTF_8), at, insert, 0);
    }

    /** The UTF-8 bytes of body with {@code removed} bytes at {@code at} replaced by {@code insert}. */
    private static byte[] splice(String body, int at, byte[] insert, int removed) {
        return splice(body.getBytes(StandardCharsets.UTF_8), at, insert, removed);
    }

    private static byte[] splice(byte[] body, int at, byte[] insert, int removed) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        out.write(body, 0, at);
        out.writeBytes(insert);
        out.write(body, at + removed, body.length - at - removed);
        return out.toByteArray();
    }

    private static List<String> lines(String csv) {
        return new ArrayList<>(Arrays.asList(csv.split("\n", -1)));
    }

    private static String cell(String csv, int row, int column) {
        return lines(csv).get(row).split(",", -1)[column];
    }

    /** Character offset of a cell in the CSV text (ASCII, so also its byte offset). */
    private static int cellStart(String csv, int row, int column) {
        List<String> lines = lines(csv);
        int at = 0;
        for (int i = 0; i < row; i++) {
            at += lines.get(i).length() + 1;
        }
        String[] cells = lines.get(row).split(",", -1);
        for (int j = 0; j < column; j++) {
            at += cells[j].length() + 1;
        }
        return at;
    }

    private static String setCell(String csv, int row, int column, String value) {
        return editLine(csv, row, line -> {
            String[] cells = line.split(",", -1);
            cells[column] = value;
            return String.join(",", cells);
        });
    }

    private static String editLine(String csv, int row, UnaryOperator<String> edit) {
        List<String> lines = lines(csv);
        lines.set(row, edit.apply(lines.get(row)));
        return String.join("\n", lines);
    }

    private static String removeColumn(String csv, int column) {
        List<String> lines = lines(csv);
        for (int i = 0; i < lines.size(); i++) {
            if (!lines.get(i).isEmpty()) {
                List<String> cells = new ArrayList<>(Arrays.asList(lines.get(i).split(",", -1)));
                cells.remove(column);
                lines.set(i, String.join(",", cells));
            }
        }
        return String.join("\n", lines);
    }

    private static String swapRows(String csv, int a, int b) {
        List<String> lines = lines(csv);
        String first = lines.get(a);
        lines.set(a, lines.get(b));
        lines.set(b, first);
        return String.join("\n", lines);
    }

    static byte[] gzip(byte[] plain) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        try (GZIPOutputStream z = new GZIPOutputStream(out)) {
            z.write(plain);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        return out.toByteArray();
    }
}
