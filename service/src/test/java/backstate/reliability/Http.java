package backstate.reliability;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;

/**
 * A polite JSON/CSV client for a server on loopback, with bounded waits everywhere. Transport
 * failures are thrown as IOException: a test that kills the server expects some.
 */
final class Http {
    /** Connect and answer bounds: far beyond a healthy answer, short enough to fail a hang fast. */
    static final Duration CONNECT_TIMEOUT = Duration.ofSeconds(5);
    static final Duration ANSWER_TIMEOUT = Duration.ofSeconds(30);
    static final String DEMO_VERSION_QUERY = "?model=reefer-40&version=1";
    private static final ObjectMapper JSON = new ObjectMapper();

    private final HttpClient client = HttpClient.newBuilder().version(HttpClient.Version.HTTP_1_1)
            .connectTimeout(CONNECT_TIMEOUT).build();
    private final String base;
    private final Duration answerTimeout;

    Http(String base) {
        this(base, ANSWER_TIMEOUT);
    }

    Http(String base, Duration answerTimeout) {
        this.base = base;
        this.answerTimeout = answerTimeout;
    }

    record Reply(int status, String body, java.net.http.HttpHeaders headers) {
        JsonNode json() {
            try {
                return JSON.readTree(body);
            } catch (IOException e) {
                throw new AssertionError("not JSON (" + status + "): " + body, e);
            }
        }

        String header(String name) {
            return headers.firstValue(name).orElse(null);
        }
    }

    Reply get(String path) throws IOException, InterruptedException {
        return send(HttpRequest.newBuilder(URI.create(base + path)).GET());
    }

    Reply post(String path, String contentType, byte[] body, String... headers) throws IOException, InterruptedException {
        HttpRequest.Builder b = HttpRequest.newBuilder(URI.create(base + path))
                .header("Content-Type", contentType)
                .POST(HttpRequest.BodyPublishers.ofByteArray(body));
        for (int i = 0; i + 1 < headers.length; i += 2) {
            b.header(headers[i], headers[i + 1]);
        }
        return send(b);
    }

    /** Posts a CSV trace for the demo model v1. */
    Reply postTrace(String unitId, byte[] csv, String idempotencyKeyOrNull) throws IOException, InterruptedException {
        String path = "/v1/units/" + unitId + "/traces" + DEMO_VERSION_QUERY;
        return idempotencyKeyOrNull == null ? post(path, "text/csv", csv)
                : post(path, "text/csv", csv, "Idempotency-Key", idempotencyKeyOrNull);
    }

    /** Creates family reefer-40 and publishes the demo model as its version 1. */
    void publishDemoModel(Path testData) throws IOException, InterruptedException {
        Reply family = post("/v1/models", "application/json",
                "{\"name\":\"reefer-40\",\"description\":\"demo\"}".getBytes(java.nio.charset.StandardCharsets.UTF_8));
        if (family.status() != 201) {
            throw new AssertionError("create family: " + family.status() + " " + family.body());
        }
        Reply version = post("/v1/models/reefer-40/versions", "application/json",
                Files.readAllBytes(ReeferTraces.modelFile(testData)));
        if (version.status() != 201) {
            throw new AssertionError("publish version: " + version.status() + " " + version.body());
        }
    }

    private Reply send(HttpRequest.Builder request) throws IOException, InterruptedException {
        HttpResponse<String> r = client.send(request.timeout(answerTimeout).build(), HttpResponse.BodyHandlers.ofString());
        return new Reply(r.statusCode(), r.body(), r.headers());
    }
}
