package backstate.cli;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.InputStream;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Loads the invented demo fleet into a running service through its public API: the model family,
 * its versions, and one trace per unit. The files are test-data/demo's, packed into the jar under
 * {@value #RESOURCES} at build time, so the demo starts from any working directory.
 *
 * <p>The demo traces count seconds on their own clock (first samples 0–86 340 s, 6 h each). With
 * a recording start the loader declares it on every trace ({@code "time since …"} on a CSV's time
 * column, {@code "start"} in JSON), so the recordings sit where the start puts them in recording
 * time; without one the seconds are read as seconds since 1970, as any trace's would be. The
 * fleet is posted once: when the family already exists (a restart on the same database) nothing
 * is posted again.
 */
public final class DemoLoader {
    private static final Logger LOG = LoggerFactory.getLogger(DemoLoader.class);
    /** Where the demo files sit on the class path. */
    static final String RESOURCES = "/demo/";

    /**
     * Where the demo's own clock starts in recording time: its windows then fall between
     * 2026-11-30T00:09 and 2026-12-01T05:59 UTC (fixed, so that documented examples name real dates).
     */
    public static final java.time.Instant DEMO_START = java.time.Instant.parse("2026-11-30T00:00:00Z");

    private final String base;
    private final String startOrNull;
    private final HttpClient http = HttpClient.newHttpClient();
    private final ObjectMapper mapper = new ObjectMapper();

    /** The demo with its clock starting at {@link #DEMO_START}. */
    public DemoLoader(String base) {
        this(base, DEMO_START);
    }

    /** The demo with its clock starting at {@code start} (whole seconds, UTC), or as seconds since 1970 when null. */
    public DemoLoader(String base, java.time.Instant start) {
        this.base = base;
        this.startOrNull = start == null ? null : start.truncatedTo(java.time.temporal.ChronoUnit.SECONDS).toString();
    }

    public void load() throws IOException, InterruptedException {
        JsonNode fleet = mapper.readTree(file("fleet.json"));
        String family = fleet.get("family").asText();
        int created = post("/v1/models", "application/json",
                mapper.writeValueAsBytes(java.util.Map.of("name", family, "description", "demo reefer fleet")), null);
        if (created != 201) {
            LOG.info("demo fleet already loaded (family {} exists); nothing posted", family);
            return;
        }
        for (int v = 1; v <= 2; v++) {
            post("/v1/models/" + family + "/versions", "application/json",
                    file("models/" + family + ".v" + v + ".json"), null);
        }
        for (JsonNode unit : fleet.get("units")) {
            String id = unit.get("unitId").asText();
            String trace = unit.get("trace").asText();
            boolean json = trace.endsWith(".json");
            post("/v1/units/" + id + "/traces?model=" + family + "&version=" + unit.get("version").asInt(),
                    json ? "application/json" : "text/csv", withStart(file(trace), json), "demo-" + id);
        }
        LOG.info("demo fleet loaded: {} units of {}. Try {}/v1/units/{}/estimates/latest", fleet.get("units").size(),
                family, base, fleet.get("units").get(0).get("unitId").asText());
    }

    /** The trace body with the recording start declared, or as it is without one. */
    byte[] withStart(byte[] body, boolean json) throws IOException {
        if (startOrNull == null) {
            return body;
        }
        if (json) {
            com.fasterxml.jackson.databind.node.ObjectNode trace = (com.fasterxml.jackson.databind.node.ObjectNode) mapper.readTree(body);
            trace.put("start", startOrNull);
            return mapper.writeValueAsBytes(trace);
        }
        String text = new String(body, java.nio.charset.StandardCharsets.UTF_8);
        if (!text.startsWith("time,")) {
            throw new IOException("demo CSV trace does not start with a time column");
        }
        return ("time since " + startOrNull + text.substring("time".length())).getBytes(java.nio.charset.StandardCharsets.UTF_8);
    }

    /** A demo file by its path under test-data/demo, e.g. "traces/RCX-85159.csv". */
    static byte[] file(String relative) throws IOException {
        try (InputStream in = DemoLoader.class.getResourceAsStream(RESOURCES + relative)) {
            if (in == null) {
                throw new IOException("demo file " + RESOURCES + relative + " missing from the class path");
            }
            return in.readAllBytes();
        }
    }

    private int post(String path, String type, byte[] body, String key) throws IOException, InterruptedException {
        HttpRequest.Builder request = HttpRequest.newBuilder(URI.create(base + path))
                .header("Content-Type", type).POST(HttpRequest.BodyPublishers.ofByteArray(body));
        if (key != null) {
            request.header("Idempotency-Key", key);
        }
        HttpResponse<String> response = http.send(request.build(), HttpResponse.BodyHandlers.ofString());
        if (response.statusCode() >= 400 && response.statusCode() != 409) {
            LOG.warn("demo load: POST {} answered {}: {}", path, response.statusCode(), response.body());
        }
        return response.statusCode();
    }
}
