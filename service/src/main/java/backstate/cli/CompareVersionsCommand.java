package backstate.cli;

import backstate.formats.EstimateCaution;
import backstate.text.Counted;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.PrintStream;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Duration;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;

/**
 * {@code compare-versions}: asks a server to compare a candidate model version with a baseline
 * over stored traces (a regression run, {@code POST /v1/regressions}), shows its progress,
 * prints the summary, and exits with the verdict, for CI pipelines. It needs an admin or
 * pipeline key when the server has keys on.
 * Exit codes: 0 pass, 1 fail, 2 bad input or server unreachable before the run started, 3 no
 * verdict (the run failed or was cancelled on the server, or the server was lost while following
 * it). {@code --help} prints the usage and exits 0.
 */
public final class CompareVersionsCommand {
    /** The command's name on the command line. */
    public static final String NAME = "compare-versions";
    static final int PASS = 0;
    static final int FAIL = 1;
    static final int BAD_INPUT = 2;
    static final int NO_VERDICT = 3;
    /** How often the run's state is read; a progress line is printed when it has changed. */
    static final Duration POLL = Duration.ofSeconds(1);
    static final Duration REQUEST_TIMEOUT = Duration.ofSeconds(30);
    /** How long busy answers (503 or 429 with Retry-After) are waited out before giving up. */
    static final Duration BUSY_LIMIT = Duration.ofMinutes(2);
    /** The longest single wait a Retry-After gets. */
    static final Duration LONGEST_WAIT = Duration.ofSeconds(10);
    /** The key is taken from here when --api-key is not given, so it need not appear in a process list. */
    static final String KEY_VARIABLE = "BACKSTATE_API_KEY";

    private static final Set<String> FLAGS = Set.of("server", "family", "baseline", "candidate", "units", "latest",
            "from", "to", "received-from", "received-to", "tolerance-chi2", "tolerance-share", "tolerance-x0", "api-key");
    static final String USAGE = "usage: backstate " + NAME + " --server URL --family F --baseline N --candidate M"
            + " [--units A,B,... | --latest K] [--from T] [--to T] [--received-from T] [--received-to T] [--tolerance-chi2 X]"
            + " [--tolerance-share S] [--tolerance-x0 K] [--api-key KEY]";

    private static final Duration CONNECT_TIMEOUT = Duration.ofSeconds(10);

    private final ObjectMapper mapper = new ObjectMapper();
    private final HttpClient http = HttpClient.newBuilder().connectTimeout(CONNECT_TIMEOUT).build();
    private final PrintStream out;
    private final PrintStream err;
    private final String server;
    private final String key;

    private CompareVersionsCommand(PrintStream out, PrintStream err, String server, String key) {
        this.out = out;
        this.err = err;
        this.server = server.endsWith("/") ? server.substring(0, server.length() - 1) : server;
        this.key = key;
    }

    public static int run(String[] args, PrintStream out, PrintStream err) {
        if (Arrays.asList(args).contains("--help") || Arrays.asList(args).contains("-h")) {
            out.println(USAGE);
            return PASS;
        }
        Map<String, String> flags;
        Map<String, Object> request;
        try {
            flags = flags(args);
            request = request(flags);
        } catch (IllegalArgumentException e) {
            err.println("backstate " + NAME + ": " + e.getMessage() + " (--help for usage)");
            return BAD_INPUT;
        }
        String key = flags.getOrDefault("api-key", System.getenv(KEY_VARIABLE));
        CompareVersionsCommand command = new CompareVersionsCommand(out, err, flags.get("server"), key);
        try {
            return command.startAndFollow(request);
        } catch (IOException | IllegalArgumentException e) {
            err.println("backstate " + NAME + ": cannot reach " + flags.get("server") + ": " + unreachable(e));
            return BAD_INPUT;
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            err.println("backstate " + NAME + ": interrupted; the run goes on on the server");
            return NO_VERDICT;
        }
    }

    private int startAndFollow(Map<String, Object> request) throws IOException, InterruptedException {
        String body = mapper.writeValueAsString(request);
        HttpResponse<String> started = sendPatiently(() -> HttpRequest.newBuilder(uri("/v1/regressions"))
                .header("Content-Type", "application/json").POST(HttpRequest.BodyPublishers.ofString(body)));
        if (busyFor(started) != null) {
            printProblem("the server stayed busy for " + BUSY_LIMIT.toSeconds() + " s; no run was started", started);
            return NO_VERDICT;
        }
        if (started.statusCode() != 202) {
            printProblem("the server refused the run", started);
            return BAD_INPUT;
        }
        JsonNode run = mapper.readTree(started.body());
        String id = run.get("id").asText();
        out.printf(Locale.ROOT, "comparison %s: %s version %d -> %d over %s%n", id, run.get("family").asText(),
                run.get("baseline").asInt(), run.get("candidate").asInt(),
                Counted.of(run.path("progress").path("total").asInt(), "trace"));
        String shown = "";
        while (!finished(run)) {
            Thread.sleep(POLL.toMillis());
            HttpResponse<String> polled;
            try {
                polled = sendPatiently(() -> HttpRequest.newBuilder(uri("/v1/regressions/" + id)).GET());
            } catch (IOException e) {
                err.println("backstate " + NAME + ": lost " + server + " while following the run: " + unreachable(e));
                return runGoesOn(id);
            }
            if (polled.statusCode() != 200) {
                printProblem("reading the run failed", polled);
                return runGoesOn(id);
            }
            run = mapper.readTree(polled.body());
            String progress = run.path("progress").path("done").asInt() + "/" + run.path("progress").path("total").asInt()
                    + " traces";
            if (!progress.equals(shown)) {
                out.println("  " + progress);
                shown = progress;
            }
        }
        return summarise(run);
    }

    /** The run was started, so it goes on without us: no verdict here (exit 3), and where to read it. */
    private int runGoesOn(String id) {
        err.println("  the run goes on on the server; its verdict will be at " + server + "/v1/regressions/" + id);
        return NO_VERDICT;
    }

    private static boolean finished(JsonNode run) {
        String state = run.path("state").asText();
        return !state.equals("queued") && !state.equals("running");
    }

    private int summarise(JsonNode run) {
        String link = server + "/v1/regressions/" + run.get("id").asText();
        JsonNode result = run.path("result");
        if (!run.path("state").asText().equals("succeeded") || !result.has("verdict")) {
            err.println("no verdict: the run ended " + run.path("state").asText() + " " + run.path("errors"));
            err.println("details: " + link);
            return NO_VERDICT;
        }
        JsonNode verdict = result.get("verdict");
        JsonNode s = result.get("summary");
        boolean pass = verdict.get("pass").asBoolean();
        out.printf(Locale.ROOT, "%s (rule %s): %s%n", pass ? "PASS" : "FAIL", verdict.get("rule").asText(),
                verdict.get("detail").asText());
        out.printf(Locale.ROOT, "units: %d compared, %d better, %d worse, %d unchanged, %d not compared%n",
                s.get("compared").asInt(), s.get("better").asInt(), s.get("worse").asInt(), s.get("unchanged").asInt(),
                s.get("notCompared").asInt());
        if (s.has("medianDeltaChi2PerDof")) {
            out.printf(Locale.ROOT, "delta χ²/dof per unit: median %+.4f, p95 %+.4f%n",
                    s.get("medianDeltaChi2PerDof").asDouble(), s.get("p95DeltaChi2PerDof").asDouble());
        }
        if (!result.get("statesComparable").asBoolean()) {
            out.println("x0 not compared: " + result.path("statesNote").asText());
        }
        if (!result.get("worseBeyondTolerance").isEmpty()) {
            out.println("worse beyond tolerance:");
            for (JsonNode f : result.get("worseBeyondTolerance")) {
                List<String> reasons = mapper.convertValue(f.get("reasons"), mapper.getTypeFactory()
                        .constructCollectionType(List.class, String.class));
                out.println("  " + f.get("unitId").asText() + ": " + String.join("; ", reasons));
            }
        }
        out.println("full result: " + link);
        out.println(EstimateCaution.TEXT);
        return pass ? PASS : FAIL;
    }

    private void printProblem(String what, HttpResponse<String> response) {
        err.println("backstate " + NAME + ": " + what + " (HTTP " + response.statusCode() + ")");
        try {
            JsonNode problem = mapper.readTree(response.body());
            if (problem.path("errors").isEmpty()) {
                err.println("  " + problem.path("detail").asText(response.body()));
            }
            for (JsonNode e : problem.path("errors")) {
                err.println("  " + e.path("field").asText() + ": " + e.path("detail").asText());
            }
        } catch (IOException notJson) {
            err.println("  " + response.body());
        }
    }

    /**
     * Sends the request again after each busy answer (503 or 429 with Retry-After: the server asks to
     * be called back, RFC 9110 §10.2.3), waiting as it asks (at most {@link #LONGEST_WAIT} at a time),
     * until it answers otherwise or {@link #BUSY_LIMIT} has passed; returns the last answer.
     */
    private HttpResponse<String> sendPatiently(java.util.function.Supplier<HttpRequest.Builder> request)
            throws IOException, InterruptedException {
        long deadline = System.nanoTime() + BUSY_LIMIT.toNanos();
        HttpResponse<String> response = send(request.get());
        for (Duration wait = busyFor(response); wait != null && System.nanoTime() + wait.toNanos() < deadline;
                wait = busyFor(response)) {
            Thread.sleep(wait.toMillis());
            response = send(request.get());
        }
        return response;
    }

    /**
     * How long a busy answer asks to wait: its Retry-After in seconds, at least 1 (a "0" would have the
     * command ask again at once, over and over) and at most {@link #LONGEST_WAIT}; null for any other answer.
     */
    static Duration busyFor(HttpResponse<?> response) {
        if (response.statusCode() != 503 && response.statusCode() != 429) {
            return null;
        }
        try {
            long seconds = Long.parseLong(response.headers().firstValue("Retry-After").orElse("").trim());
            return seconds < 0 ? null : Duration.ofSeconds(Math.max(1, Math.min(seconds, LONGEST_WAIT.toSeconds())));
        } catch (NumberFormatException none) {
            return null; // no delay asked (or an HTTP date, which this service never sends): not a call-back
        }
    }

    private HttpResponse<String> send(HttpRequest.Builder request) throws IOException, InterruptedException {
        if (key != null && !key.isBlank()) {
            request.header("Authorization", "Bearer " + key);
        }
        return http.send(request.timeout(REQUEST_TIMEOUT).build(), HttpResponse.BodyHandlers.ofString());
    }

    private URI uri(String path) {
        return URI.create(server + path);
    }

    /** The POST /v1/regressions body the flags describe; a malformed flag throws naming it. */
    static Map<String, Object> request(Map<String, String> flags) {
        for (String required : List.of("server", "family", "baseline", "candidate")) {
            if (!flags.containsKey(required)) {
                throw new IllegalArgumentException("missing --" + required);
            }
        }
        serverUrl(flags.get("server"));
        if (flags.containsKey("units") && flags.containsKey("latest")) {
            throw new IllegalArgumentException("got --units and --latest, expected at most one of them");
        }
        Map<String, Object> body = new LinkedHashMap<>();
        body.put("family", flags.get("family"));
        body.put("baseline", whole("baseline", flags.get("baseline")));
        body.put("candidate", whole("candidate", flags.get("candidate")));
        Map<String, Object> traces = new LinkedHashMap<>();
        if (flags.containsKey("units")) {
            traces.put("units", Arrays.stream(flags.get("units").split(",")).map(String::strip)
                    .filter(u -> !u.isEmpty()).toList());
        }
        if (flags.containsKey("latest")) {
            traces.put("latestPerUnit", whole("latest", flags.get("latest")));
        }
        putIfGiven(traces, "from", flags.get("from"));
        putIfGiven(traces, "to", flags.get("to"));
        putIfGiven(traces, "receivedFrom", flags.get("received-from"));
        putIfGiven(traces, "receivedTo", flags.get("received-to"));
        if (!traces.isEmpty()) {
            body.put("traces", traces);
        }
        Map<String, Object> tolerances = new LinkedHashMap<>();
        putIfGiven(tolerances, "maxChi2PerDofIncrease", decimal("tolerance-chi2", flags.get("tolerance-chi2")));
        putIfGiven(tolerances, "maxWorseShare", decimal("tolerance-share", flags.get("tolerance-share")));
        putIfGiven(tolerances, "maxX0ShiftSe", decimal("tolerance-x0", flags.get("tolerance-x0")));
        if (!tolerances.isEmpty()) {
            body.put("tolerances", tolerances);
        }
        return body;
    }

    private static Map<String, String> flags(String[] args) {
        Map<String, String> flags = new LinkedHashMap<>();
        for (int i = 0; i < args.length; i++) {
            String name = args[i].startsWith("--") ? args[i].substring(2) : "";
            if (!FLAGS.contains(name) || i + 1 == args.length) {
                throw new IllegalArgumentException("got " + args[i] + (FLAGS.contains(name) ? " without a value" : ""));
            }
            flags.put(name, args[++i]);
        }
        return flags;
    }

    /** Why the server could not be reached, in words: the HTTP client leaves a refused connection without a message. */
    static String unreachable(Exception e) {
        if (e instanceof java.net.http.HttpConnectTimeoutException) {
            return "no connection within " + CONNECT_TIMEOUT.toSeconds() + " s";
        }
        if (e instanceof java.net.ConnectException) {
            for (Throwable cause = e; cause != null; cause = cause.getCause()) {
                if (cause instanceof java.nio.channels.UnresolvedAddressException) {
                    return "unknown host";
                }
            }
            return "connection refused (is the service running there?)";
        }
        return e.getMessage() == null ? e.getClass().getSimpleName() : e.getMessage();
    }

    /** Refuses a --server that is not an http(s) URL with a host, before anything is sent. */
    private static void serverUrl(String value) {
        URI uri;
        try {
            uri = new URI(value);
        } catch (java.net.URISyntaxException e) {
            uri = null;
        }
        if (uri == null || uri.getHost() == null || !("http".equals(uri.getScheme()) || "https".equals(uri.getScheme()))) {
            throw new IllegalArgumentException("got --server " + value + ", expected a URL such as http://backstate.internal:8080");
        }
    }

    private static int whole(String flag, String value) {
        if (!value.matches("\\d{1,9}")) {
            throw new IllegalArgumentException("got --" + flag + " " + value + ", expected a whole number");
        }
        return Integer.parseInt(value);
    }

    private static Double decimal(String flag, String value) {
        if (value == null) {
            return null;
        }
        try {
            return Double.valueOf(value);
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException("got --" + flag + " " + value + ", expected a decimal number");
        }
    }

    private static void putIfGiven(Map<String, Object> map, String key, Object value) {
        if (value != null) {
            map.put(key, value);
        }
    }
}
