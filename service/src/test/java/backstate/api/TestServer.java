package backstate.api;

import backstate.App;
import backstate.config.Settings;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Clock;
import java.time.Duration;
import java.util.Map;
import java.util.function.Function;

/**
 * A real server on a free loopback port with a fresh database (a temporary SQLite file unless an
 * {@link Engine} is named), and a small HTTP client for tests.
 */
public final class TestServer implements AutoCloseable {
    /** Where the demo fleet and reference data live (set by surefire; falls back to the module's parent). */
    public static final Path TEST_DATA = Path.of(System.getProperty("backstate.testData", "../test-data"));

    public final ObjectMapper mapper = new ObjectMapper();
    private final App app;
    private final HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
    private final String base;
    private final TestDatabase database;

    public TestServer(Path folder) {
        this(folder, Map.of());
    }

    /** Access control is off unless {@code env} sets BACKSTATE_AUTH (functional tests need no keys). */
    public TestServer(Path folder, Map<String, String> env) {
        this(Engine.SQLITE, folder, env);
    }

    /** On a fresh database of {@code engine} (SQLite: {@code folder}/test.db); {@code env} as above. */
    public TestServer(Engine engine, Path folder, Map<String, String> env) {
        this(engine.newDatabase(folder, "test"), env);
    }

    /** On an existing database, e.g. a second replica on another server's PostgreSQL database. */
    public TestServer(TestDatabase database, Map<String, String> env) {
        this.database = database;
        Settings settings = Settings.from(new String[] {"--host", "127.0.0.1", "--port", "0", "--database",
                database.serviceValue(), "--workers", "2",
                "--auth", env.getOrDefault("BACKSTATE_AUTH", "off")}, env);
        this.app = new App(settings, Clock.systemUTC()).start(settings);
        this.base = "http://127.0.0.1:" + app.port();
    }

    /** The database the server runs on, for checks from outside it. */
    public TestDatabase database() {
        return database;
    }

    public String base() {
        return base;
    }

    /** A reply: status, headers and the body as text. */
    public record Reply(int status, String body, java.net.http.HttpHeaders headers) {
        public JsonNode json() {
            try {
                return new ObjectMapper().readTree(body);
            } catch (IOException e) {
                throw new AssertionError("not JSON: " + body, e);
            }
        }

        public String contentType() {
            return headers.firstValue("Content-Type").orElse("");
        }
    }

    public Reply get(String path) {
        return send(HttpRequest.newBuilder(URI.create(base + path)).GET());
    }

    public Reply post(String path, String contentType, byte[] body, String... headers) {
        HttpRequest.Builder b = HttpRequest.newBuilder(URI.create(base + path))
                .POST(HttpRequest.BodyPublishers.ofByteArray(body));
        if (contentType != null) {
            b.header("Content-Type", contentType);
        }
        for (int i = 0; i + 1 < headers.length; i += 2) {
            b.header(headers[i], headers[i + 1]);
        }
        return send(b);
    }

    public Reply postJson(String path, Object body) {
        try {
            return post(path, "application/json", mapper.writeValueAsBytes(body));
        } catch (IOException e) {
            throw new AssertionError(e);
        }
    }

    public Reply send(HttpRequest.Builder request) {
        try {
            HttpResponse<String> r = http.send(request.timeout(Duration.ofSeconds(60)).build(), HttpResponse.BodyHandlers.ofString());
            return new Reply(r.statusCode(), r.body(), r.headers());
        } catch (IOException e) {
            throw new AssertionError(e);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new AssertionError(e);
        }
    }

    /** Creates the demo family and publishes its two versions (v1 fits the demo data, v2 is the worse candidate). */
    public void publishDemoModels() throws IOException {
        postJson("/v1/models", Map.of("name", "reefer-40", "description", "demo"));
        for (int v = 1; v <= 2; v++) {
            Reply r = post("/v1/models/reefer-40/versions", "application/json",
                    Files.readAllBytes(TEST_DATA.resolve("demo/models/reefer-40.v" + v + ".json")));
            if (r.status() != 201) {
                throw new AssertionError("publish v" + v + ": " + r.status() + " " + r.body());
            }
        }
    }

    /** Polls a job until it leaves queued/running, failing after a bounded wait. */
    public JsonNode awaitJob(String jobId) throws InterruptedException {
        return awaitFinished(this::get, "/v1/jobs/" + jobId);
    }

    /** Polls a regression run until it leaves queued/running, failing after a bounded wait. */
    public JsonNode awaitRegression(String regressionId) throws InterruptedException {
        return awaitFinished(this::get, "/v1/regressions/" + regressionId);
    }

    /**
     * Reads {@code path} through {@code get} every 20 ms until its {@code state} leaves queued and
     * running, and returns that answer; a bounded hang guard (60 s), not a timing assertion.
     */
    public static JsonNode awaitFinished(Function<String, Reply> get, String path) throws InterruptedException {
        long deadline = System.nanoTime() + Duration.ofSeconds(60).toNanos();
        while (System.nanoTime() < deadline) {
            JsonNode answer = get.apply(path).json();
            String state = answer.path("state").asText();
            if (!state.equals("queued") && !state.equals("running")) {
                return answer;
            }
            Thread.sleep(20);
        }
        throw new AssertionError(path + " did not finish within 60 s");
    }

    public App app() {
        return app;
    }

    @Override
    public void close() {
        app.close();
    }
}
