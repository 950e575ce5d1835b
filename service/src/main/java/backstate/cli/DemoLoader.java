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
 * its versions, and one trace per unit. Idempotency keys make a reload harmless. The files are
 * test-data/demo's, packed into the jar under {@value #RESOURCES} at build time, so the demo
 * starts from any working directory.
 */
public final class DemoLoader {
    private static final Logger LOG = LoggerFactory.getLogger(DemoLoader.class);
    /** Where the demo files sit on the class path. */
    static final String RESOURCES = "/demo/";

    private final String base;
    private final HttpClient http = HttpClient.newHttpClient();
    private final ObjectMapper mapper = new ObjectMapper();

    public DemoLoader(String base) {
        this.base = base;
    }

    public void load() throws IOException, InterruptedException {
        JsonNode fleet = mapper.readTree(file("fleet.json"));
        String family = fleet.get("family").asText();
        int created = post("/v1/models", "application/json",
                mapper.writeValueAsBytes(java.util.Map.of("name", family, "description", "demo reefer fleet")), null);
        if (created == 201) {
            for (int v = 1; v <= 2; v++) {
                post("/v1/models/" + family + "/versions", "application/json",
                        file("models/" + family + ".v" + v + ".json"), null);
            }
        }
        for (JsonNode unit : fleet.get("units")) {
            String id = unit.get("unitId").asText();
            String trace = unit.get("trace").asText();
            String type = trace.endsWith(".json") ? "application/json" : "text/csv";
            post("/v1/units/" + id + "/traces?model=" + family + "&version=" + unit.get("version").asInt(), type,
                    file(trace), "demo-" + id);
        }
        LOG.info("demo fleet loaded: {} units of {}. Try {}/v1/units/{}/estimates/latest", fleet.get("units").size(),
                family, base, fleet.get("units").get(0).get("unitId").asText());
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
