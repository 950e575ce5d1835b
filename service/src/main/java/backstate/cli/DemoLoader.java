package backstate.cli;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Loads the invented demo fleet (test-data/demo) into a running service through its public API:
 * the model family, its versions, and one trace per unit. Idempotency keys make a reload harmless.
 */
public final class DemoLoader {
    private static final Logger LOG = LoggerFactory.getLogger(DemoLoader.class);

    private final String base;
    private final Path folder;
    private final HttpClient http = HttpClient.newHttpClient();
    private final ObjectMapper mapper = new ObjectMapper();

    public DemoLoader(String base, Path folder) {
        this.base = base;
        this.folder = folder;
    }

    public void load() throws IOException, InterruptedException {
        JsonNode fleet = mapper.readTree(folder.resolve("fleet.json").toFile());
        String family = fleet.get("family").asText();
        int created = post("/v1/models", "application/json",
                mapper.writeValueAsBytes(java.util.Map.of("name", family, "description", "demo reefer fleet")), null);
        if (created == 201) {
            for (int v = 1; v <= 2; v++) {
                post("/v1/models/" + family + "/versions", "application/json",
                        Files.readAllBytes(folder.resolve("models/" + family + ".v" + v + ".json")), null);
            }
        }
        for (JsonNode unit : fleet.get("units")) {
            String id = unit.get("unitId").asText();
            String file = unit.get("trace").asText();
            String type = file.endsWith(".json") ? "application/json" : "text/csv";
            post("/v1/units/" + id + "/traces?model=" + family + "&version=" + unit.get("version").asInt(), type,
                    Files.readAllBytes(folder.resolve(file)), "demo-" + id);
        }
        LOG.info("demo fleet loaded: {} units of {}. Try {}/v1/units/{}/estimates/latest", fleet.get("units").size(),
                family, base, fleet.get("units").get(0).get("unitId").asText());
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
