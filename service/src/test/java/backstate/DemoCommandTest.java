package backstate;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code backstate demo} through the command line in-process, from a working directory that is
 * not the repository root (surefire runs in service/): the demo files come from the class path,
 * as they do from the jar, so the fleet is loaded wherever the command is started.
 */
class DemoCommandTest {
    /** The demo's 20 traces solve in a few seconds; this only bounds a hung test. */
    static final Duration FLEET_DEADLINE = Duration.ofSeconds(60);
    static final int DEMO_UNITS = 20;

    final HttpClient http = HttpClient.newHttpClient();
    final ObjectMapper mapper = new ObjectMapper();

    @Test
    void demo_loads_the_fleet_from_the_class_path_outside_the_repository_root(@TempDir Path dir) throws Exception {
        assertFalse(Files.exists(Path.of("test-data/demo/fleet.json")), "the working directory holds no demo files");
        ByteArrayOutputStream err = new ByteArrayOutputStream();
        Launcher.Outcome outcome = new Launcher(System.out, new PrintStream(err, true, StandardCharsets.UTF_8), Map.of())
                .run(new String[] {"demo", "--host", "127.0.0.1", "--port", "0", "--database",
                        dir.resolve("demo.db").toString(), "--workers", "2"});
        Launcher.Outcome.Serving serving = assertInstanceOf(Launcher.Outcome.Serving.class, outcome, err.toString());
        try (App app = serving.app()) {
            String base = "http://127.0.0.1:" + app.port();
            assertEquals(2, get(base + "/v1/models/reefer-40/versions").get("items").size());
            assertEquals(DEMO_UNITS, awaitEstimatedUnits(base));
        }
    }

    /** Units of the demo family with an estimate under version 1, once all are solved (bounded wait). */
    int awaitEstimatedUnits(String base) throws Exception {
        long deadline = System.nanoTime() + FLEET_DEADLINE.toNanos();
        int units = 0;
        while (System.nanoTime() < deadline) {
            units = get(base + "/v1/fleet/reefer-40/units?version=1&limit=100").get("items").size();
            if (units == DEMO_UNITS) {
                return units;
            }
            Thread.sleep(100);
        }
        return units;
    }

    JsonNode get(String url) throws Exception {
        HttpResponse<String> r = http.send(HttpRequest.newBuilder(URI.create(url)).GET().build(),
                HttpResponse.BodyHandlers.ofString());
        assertEquals(200, r.statusCode(), url + ": " + r.body());
        return mapper.readTree(r.body());
    }
}
