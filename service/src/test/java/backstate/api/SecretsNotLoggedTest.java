package backstate.api;

import static backstate.api.AuthFixture.ADMIN_ID;
import static backstate.api.AuthFixture.ADMIN_KEY;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStreamReader;
import java.io.UncheckedIOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * What the service prints while handling requests that carry keys and bodies: key IDs, never
 * keys, never a body. The service runs as `backstate serve` in a child JVM at the production log
 * level (info; the tests' own level is warn), and its whole console output is read back.
 */
class SecretsNotLoggedTest {
    static final Pattern LISTENING = Pattern.compile("backstate listening on http://localhost:(\\d+)");
    /** Bounds how long a broken child can hang the test; not a timing assertion. */
    static final long START_LIMIT_SECONDS = 120;

    /** A label as JSON text: ASCII on the wire, a U+202E, U+2066 and U+0085 once read: refused at issue. */
    static final String HOSTILE_LABEL_JSON = "night\\u202eshift\\u2066 \\u0085ops\\\\";
    /** A printable label ending in a backslash, which the log writes doubled so no escape can be forged. */
    static final String BACKSLASH_LABEL_JSON = "night shift ops\\\\";

    final HttpClient http = HttpClient.newHttpClient();
    final ObjectMapper json = new ObjectMapper();

    @Test
    void requests_with_keys_log_key_ids_but_never_a_key_a_header_or_a_body(@TempDir Path dir) throws Exception {
        String bodyMarker = "zq-body-marker-7f31";
        String wrongSecret = "9".repeat(64);
        ProcessBuilder pb = new ProcessBuilder(Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                "-Dorg.slf4j.simpleLogger.defaultLogLevel=info",
                // UTF-8 console, so a raw bidirectional control would come through as itself, not '?'
                "-Dsun.stderr.encoding=UTF-8", "-Dsun.stdout.encoding=UTF-8", "-cp", System.getProperty("java.class.path"),
                "backstate.App", "serve", "--host", "127.0.0.1", "--port", "0", "--workers", "1",
                "--database", dir.resolve("child.db").toString());
        pb.environment().put("BACKSTATE_ADMIN_KEY", ADMIN_KEY);
        pb.environment().remove("BACKSTATE_AUTH");
        pb.redirectErrorStream(true);
        Process child = pb.start();
        StringBuffer console = new StringBuffer();
        CompletableFuture<String> base = new CompletableFuture<>();
        Thread drain = new Thread(() -> drain(child, console, base), "child-console");
        drain.start();
        String gatewayKey;
        String gatewayId;
        try {
            String b = base.get(START_LIMIT_SECONDS, TimeUnit.SECONDS);
            assertEquals(201, send(b, "POST", "/v1/models", ADMIN_KEY, "application/json",
                    "{\"name\":\"reefer-40\",\"description\":\"demo\"}").statusCode());
            assertEquals(201, send(b, "POST", "/v1/models/reefer-40/versions", ADMIN_KEY, "application/json",
                    new String(AuthFixture.file("demo/models/reefer-40.v1.json"), StandardCharsets.UTF_8)).statusCode());
            HttpResponse<String> issued = send(b, "POST", "/v1/keys", ADMIN_KEY, "application/json",
                    "{\"role\":\"gateway\",\"unitPattern\":\"RCX-1*\",\"label\":\"gateway north\"}");
            assertEquals(201, issued.statusCode(), issued.body());
            gatewayKey = json.readTree(issued.body()).get("key").asText();
            gatewayId = json.readTree(issued.body()).get("id").asText();
            // A right-to-left override, an isolate and NEL (U+0085) in a label are refused; a backslash is kept
            assertEquals(400, send(b, "POST", "/v1/keys", ADMIN_KEY, "application/json",
                    "{\"role\":\"reader\",\"label\":\"" + HOSTILE_LABEL_JSON + "\"}").statusCode());
            assertEquals(201, send(b, "POST", "/v1/keys", ADMIN_KEY, "application/json",
                    "{\"role\":\"reader\",\"label\":\"" + BACKSLASH_LABEL_JSON + "\"}").statusCode());
            assertEquals(403, send(b, "POST", "/v1/units/RCX-20123/traces?model=reefer-40&version=1", gatewayKey,
                    "text/csv", new String(AuthFixture.file(AuthFixture.TRACE_FILE), StandardCharsets.UTF_8)).statusCode());
            assertEquals(401, send(b, "GET", "/v1/models", "bsk_" + ADMIN_ID + "_" + wrongSecret, null, null).statusCode());
            HttpResponse<String> bad = send(b, "POST", "/v1/units/RCX-1/traces?model=reefer-40&version=1", gatewayKey,
                    "application/json", "{\"" + bodyMarker + "\": [1, 2]}");
            assertEquals(400, bad.statusCode(), bad.body());
        } finally {
            child.destroy();
            child.waitFor(START_LIMIT_SECONDS, TimeUnit.SECONDS);
            child.destroyForcibly();
            drain.join();
        }
        String logged = console.toString();
        // The service's own lines are there (issue, denial, refusal), so their silence about keys means something.
        assertTrue(logged.contains("issued gateway key " + gatewayId), logged);
        assertTrue(logged.contains("denied POST /v1/units/RCX-20123/traces to gateway key " + gatewayId), logged);
        assertTrue(logged.contains("refused API key " + ADMIN_ID + ": wrong secret"), logged);
        assertTrue(logged.contains("(label \"night shift ops\\\\\")"), logged);
        for (char raw : new char[] {'\u202e', '\u2066', '\u0085'}) {
            assertEquals(-1, logged.indexOf(raw), "U+" + Integer.toHexString(raw) + " was printed raw");
        }
        assertFalse(logged.contains(ADMIN_KEY.substring(21)), "the admin key's secret was printed");
        assertFalse(logged.contains(gatewayKey.substring(21)), "the gateway key's secret was printed");
        assertFalse(logged.contains(wrongSecret), "a presented secret was printed");
        assertFalse(logged.contains("Bearer"), "an Authorization header was printed");
        assertFalse(logged.contains(bodyMarker), "a request body was printed");
    }

    HttpResponse<String> send(String base, String method, String path, String key, String contentType, String body)
            throws IOException, InterruptedException {
        HttpRequest.Builder b = HttpRequest.newBuilder(URI.create(base + path)).method(method,
                body == null ? HttpRequest.BodyPublishers.noBody() : HttpRequest.BodyPublishers.ofString(body));
        b.header("Authorization", "Bearer " + key);
        if (contentType != null) {
            b.header("Content-Type", contentType);
        }
        return http.send(b.build(), HttpResponse.BodyHandlers.ofString());
    }

    /** Copies the child's console until it exits, completing {@code base} once it listens. */
    static void drain(Process child, StringBuffer console, CompletableFuture<String> base) {
        try (BufferedReader in = new BufferedReader(new InputStreamReader(child.getInputStream(), StandardCharsets.UTF_8))) {
            for (String line = in.readLine(); line != null; line = in.readLine()) {
                console.append(line).append('\n');
                Matcher m = LISTENING.matcher(line);
                if (m.find()) {
                    base.complete("http://127.0.0.1:" + m.group(1));
                }
            }
            base.completeExceptionally(new AssertionError("the service exited before listening:\n" + console));
        } catch (IOException e) {
            base.completeExceptionally(e);
            throw new UncheckedIOException(e);
        }
    }
}
