package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.dataformat.yaml.YAMLFactory;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;

/**
 * /metrics after two posted traces are solved (one clean, one whose sensor offset the model
 * lacks): the estimate counters by family, version and flag, the latency histogram by route
 * template, the JVM's meters, and every series docs/alerts.example.yaml names.
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class AlertRulesTest {
    static final Path RULES = TestServer.TEST_DATA.resolveSibling("docs").resolve("alerts.example.yaml");
    /** A PromQL vector selector's label matchers: {@code {a="x", b="y"}}, braces inside quoted values allowed. */
    static final Pattern MATCHERS = Pattern.compile("\\{((?:[^{}\"]|\"(?:[^\"\\\\]|\\\\.)*\")*)\\}");
    static final Pattern LABEL = Pattern.compile("([a-zA-Z_][a-zA-Z0-9_]*)\\s*=\\s*\"((?:[^\"\\\\]|\\\\.)*)\"");
    static final Pattern IDENTIFIER = Pattern.compile("[a-zA-Z_:][a-zA-Z0-9_:]*");
    /** PromQL words that are not series names (aggregation modifiers and operators). */
    static final Set<String> KEYWORDS = Set.of("by", "without", "on", "ignoring", "group_left", "group_right", "bool",
            "and", "or", "unless", "offset");

    TestServer server;
    /** Sample lines of the scrape by series name: the labels of each line. */
    Map<String, List<Map<String, String>>> scraped;
    List<JsonNode> estimates = new ArrayList<>();

    @BeforeAll
    void postTwoTracesAndScrape(@TempDir Path dir) throws Exception {
        server = new TestServer(dir);
        server.publishDemoModels();
        for (String unit : List.of("RCX-85159", "RCX-79936")) { // a normal unit, and a sensor-offset unit
            byte[] csv = Files.readAllBytes(TestServer.TEST_DATA.resolve("demo/traces/" + unit + ".csv"));
            TestServer.Reply accepted = server.post("/v1/units/" + unit + "/traces?model=reefer-40&version=1", "text/csv", csv);
            assertEquals(202, accepted.status(), accepted.body());
            JsonNode job = server.awaitJob(accepted.json().get("jobId").asText());
            assertEquals("succeeded", job.get("state").asText(), job.toString());
            estimates.add(server.get("/v1/estimates/" + job.get("estimateId").asText()).json());
            assertEquals(200, server.get("/v1/units/" + unit + "/estimates/latest").status());
        }
        TestServer.Reply metrics = server.get("/metrics");
        assertEquals(200, metrics.status());
        scraped = samples(metrics.body());
    }

    @AfterAll
    void stop() {
        server.close();
    }

    @Test
    void every_series_the_example_alert_rules_name_exists_with_the_labels_they_match() throws Exception {
        List<String> expressions = expressions();
        assertEquals(4, expressions.size(), "the rules in " + RULES);
        List<String> missing = new ArrayList<>();
        Set<String> named = new TreeSet<>();
        for (String expr : expressions) {
            for (Selector s : selectors(expr)) {
                named.add(s.name());
                boolean found = scraped.getOrDefault(s.name(), List.of()).stream()
                        .anyMatch(labels -> labels.entrySet().containsAll(s.labels().entrySet()));
                if (!found) {
                    missing.add(s.name() + s.labels());
                }
            }
        }
        assertEquals(Set.of("backstate_estimates_flagged_total", "backstate_estimates_total",
                "backstate_http_latency_seconds_bucket", "backstate_queue_depth", "jvm_memory_max_bytes",
                "jvm_memory_used_bytes"), named, "the series the rules name");
        assertEquals(List.of(), missing, "named in " + RULES + " but not on /metrics");
    }

    @Test
    void estimates_are_counted_by_family_and_version_and_each_flag_they_carry() {
        assertEquals(2.0, value("backstate_estimates_total", Map.of("family", "reefer-40", "version", "1")));
        List<String> flagsOfSensorOffset = names(estimates.get(1).get("flags"));
        assertTrue(flagsOfSensorOffset.contains("model_mismatch"), "the sensor-offset unit misfits: " + flagsOfSensorOffset);
        for (String flag : List.of("unobservable", "ill_conditioned", "model_mismatch", "few_samples")) {
            long expected = estimates.stream().filter(e -> names(e.get("flags")).contains(flag)).count();
            assertEquals(expected, value("backstate_estimates_flagged_total",
                    Map.of("family", "reefer-40", "version", "1", "flag", flag)), flag);
        }
    }

    @Test
    void request_latency_is_a_histogram_by_route_template_never_by_raw_path() {
        Map<String, String> posts = Map.of("route", "/v1/units/{unitId}/traces", "method", "POST", "status", "202");
        assertEquals(2.0, value("backstate_http_latency_seconds_count", posts));
        assertTrue(scraped.get("backstate_http_latency_seconds_bucket").stream()
                .filter(labels -> labels.entrySet().containsAll(posts.entrySet())).count() > 10, "buckets, not only a count");
        assertEquals(2.0, value("backstate_http_latency_seconds_bucket", with(posts, "le", "+Inf")));
        scraped.values().forEach(lines -> lines.forEach(labels ->
                assertFalse(labels.getOrDefault("route", "").contains("RCX-"), "a raw path as a label: " + labels)));
    }

    @Test
    void the_jvm_and_process_meters_are_bound() {
        for (String name : List.of("jvm_memory_used_bytes", "jvm_threads_live_threads", "jvm_classes_loaded_classes",
                "process_cpu_usage", "system_cpu_count")) {
            assertTrue(scraped.containsKey(name), name);
        }
        assertTrue(value("jvm_threads_live_threads", Map.of()) >= 1);
    }

    /** The version the pom declares, handed over by surefire (backstate.expectedVersion). */
    @Test
    void the_build_s_version_is_a_label_of_a_constant_gauge() {
        assertEquals(1.0, value("backstate_build_info", Map.of("version", System.getProperty("backstate.expectedVersion"))));
    }

    // ---- reading the rule file and the scrape

    record Selector(String name, Map<String, String> labels) {
    }

    static List<String> expressions() throws Exception {
        JsonNode rules = new ObjectMapper(new YAMLFactory()).readTree(RULES.toFile());
        List<String> out = new ArrayList<>();
        for (JsonNode group : rules.get("groups")) {
            group.get("rules").forEach(rule -> out.add(rule.get("expr").asText()));
        }
        return out;
    }

    /** The series an expression selects: every name that is not a function, keyword or grouping label. */
    static List<Selector> selectors(String expr) {
        String plain = expr.replaceAll("\\b(by|without|on|ignoring)\\s*\\([^)]*\\)", " ").replaceAll("\\[[^\\]]*\\]", " ");
        List<Selector> out = new ArrayList<>();
        Matcher id = IDENTIFIER.matcher(plain);
        while (id.find()) {
            String name = id.group();
            int after = skipBlanks(plain, id.end());
            boolean function = after < plain.length() && plain.charAt(after) == '(';
            if (function || KEYWORDS.contains(name) || Character.isDigit(name.charAt(0))) {
                continue;
            }
            Map<String, String> labels = new LinkedHashMap<>();
            Matcher block = MATCHERS.matcher(plain);
            if (after < plain.length() && plain.charAt(after) == '{' && block.find(after) && block.start() == after) {
                Matcher label = LABEL.matcher(block.group(1));
                while (label.find()) {
                    labels.put(label.group(1), label.group(2));
                }
                id.region(block.end(), plain.length());
            }
            out.add(new Selector(name, labels));
        }
        return out;
    }

    private static int skipBlanks(String s, int from) {
        int i = from;
        while (i < s.length() && Character.isWhitespace(s.charAt(i))) {
            i++;
        }
        return i;
    }

    /** The Prometheus text exposition's sample lines, by series name. */
    static Map<String, List<Map<String, String>>> samples(String body) {
        Map<String, List<Map<String, String>>> out = new LinkedHashMap<>();
        for (String line : body.split("\n")) {
            if (line.isBlank() || line.startsWith("#")) {
                continue;
            }
            int brace = line.indexOf('{');
            int space = line.indexOf(' ');
            String name = line.substring(0, brace >= 0 && brace < space ? brace : space);
            Map<String, String> labels = new LinkedHashMap<>();
            if (brace >= 0 && brace < space) {
                Matcher label = LABEL.matcher(line.substring(brace, line.lastIndexOf('}') + 1));
                while (label.find()) {
                    labels.put(label.group(1), label.group(2));
                }
            }
            labels.put("__value__", line.substring(line.lastIndexOf(' ') + 1));
            out.computeIfAbsent(name, k -> new ArrayList<>()).add(labels);
        }
        return out;
    }

    /** The value of the one sample of {@code name} whose labels are exactly {@code labels}. */
    private double value(String name, Map<String, String> labels) {
        List<Double> values = new ArrayList<>();
        for (Map<String, String> line : scraped.getOrDefault(name, List.of())) {
            Map<String, String> own = new LinkedHashMap<>(line);
            String value = own.remove("__value__");
            if (own.equals(labels)) {
                values.add(Double.parseDouble(value));
            }
        }
        assertEquals(1, values.size(), name + labels + " in " + scraped.get(name));
        return values.get(0);
    }

    private static Map<String, String> with(Map<String, String> labels, String key, String value) {
        Map<String, String> out = new LinkedHashMap<>(labels);
        out.put(key, value);
        return out;
    }

    private static List<String> names(JsonNode array) {
        List<String> out = new ArrayList<>();
        array.forEach(n -> out.add(n.asText()));
        return out;
    }
}
