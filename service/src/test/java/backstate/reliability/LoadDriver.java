package backstate.reliability;

import backstate.formats.DocumentSolver;
import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedTrace;
import backstate.formats.TraceOptions;
import backstate.formats.TraceReader;
import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.net.URI;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.EnumMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.ConcurrentLinkedQueue;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.ThreadLocalRandom;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.concurrent.atomic.AtomicLong;
import java.util.function.LongConsumer;

/**
 * Load against a service on loopback, printing figures (run by bench/load/*.sh, never by the
 * test suite). Every run is bounded in count and time and stops by itself; a base URL off the
 * loopback interface is refused.
 *
 * <pre>
 * LoadDriver ingest --base URL --db FILE [--clients 32] [--traces 6000] [--samples 1000] [--rate R] [--client lean]
 *                   [--windows 5 --window-seconds 20 --target-p99-ms 50 --baseline-p99-ms 121,147,91]
 *                   [--warmup-rounds 4 --quiet-jit 200]
 *                   [--server-pid PID] [--jvm-log FILE] [--target-rate 600 --baseline-rate 342,387]
 * LoadDriver mixed  --base URL --db FILE [--clients 32] [--seconds 60] [--samples 1000] [--units 64] [--client lean]
 *                   [--warmup-seconds 0] [--server-pid PID --jvm-log FILE]
 *                   (half the clients post, a quarter read latest estimates, a quarter the fleet summary)
 * LoadDriver upload --base URL --db FILE [--samples 1000000] [--client lean]
 * LoadDriver offline [--samples 1000000]      parse + solve of the same CSV in this JVM, no server
 * </pre>
 *
 * <p>"Solved" is read from the server's own database file (read-only, WAL lets it read beside
 * the server): a run ends when no job is queued or running, and its end-to-end time runs from
 * the first post to the last job's {@code finished_at}.
 */
public final class LoadDriver {
    /** Hard ceilings, whatever the flags say: a run cannot become a flood. */
    static final int MAX_TRACES = 100_000;
    static final int MAX_SECONDS = 600;
    static final int MAX_CLIENTS = 256;
    /** How long the queue may take to drain after the last post before the run is called failed. */
    static final Duration DRAIN_BOUND = Duration.ofMinutes(10);
    /** Distinct synthetic traces cycled through by the clients. */
    static final int BODY_POOL = 64;
    static final Path TEST_DATA = Path.of(System.getProperty("backstate.testData", "test-data"));
    /** A single 10⁶-sample upload may take a while on a small heap; a hang still ends. */
    static final Duration UPLOAD_TIMEOUT = Duration.ofMinutes(5);

    private final Map<String, String> flags;
    private final Http http;
    private final ServerDb db;

    private LoadDriver(Map<String, String> flags) {
        this.flags = flags;
        String base = flags.getOrDefault("base", "http://127.0.0.1:8080");
        requireLoopback(base);
        this.http = new Http(base, UPLOAD_TIMEOUT);
        this.db = flags.containsKey("db") ? new ServerDb(Path.of(flags.get("db"))) : null;
    }

    public static void main(String[] args) throws Exception {
        if (args.length == 0) {
            System.err.println("usage: LoadDriver ingest|mixed|upload|offline [--flag value ...]");
            System.exit(2);
        }
        Map<String, String> flags = new LinkedHashMap<>();
        for (int i = 1; i + 1 < args.length; i += 2) {
            flags.put(args[i].replaceFirst("^--", ""), args[i + 1]);
        }
        LoadDriver driver = new LoadDriver(flags);
        boolean ok = switch (args[0]) {
            case "ingest" -> driver.ingest();
            case "mixed" -> driver.mixed();
            case "upload" -> driver.upload();
            case "offline" -> driver.offline();
            default -> throw new IllegalArgumentException("got mode " + args[0] + ", expected ingest, mixed, upload or offline");
        };
        System.exit(ok ? 0 : 1);
    }

    // ---- (a) ingest: N traces by C clients, end to end

    private boolean ingest() throws Exception {
        int clients = bounded("clients", 32, MAX_CLIENTS);
        int samples = bounded("samples", 1000, 2_000_000);
        // --rate R: open loop, post i is due at start + i/R and its latency counts from then, so a
        // slow server cannot hide its queueing by slowing the clients down. 0 (default): as fast as taken.
        int rate = flags.containsKey("rate") ? bounded("rate", 1, 100_000) : 0;
        // --windows W (paced only): W windows of --window-seconds each, reported one by one (IngestWindows).
        IngestWindows windows = windowsOrNull(rate);
        int traces = windows == null ? bounded("traces", 6000, MAX_TRACES)
                : Math.min(MAX_TRACES, rate * bounded("window-seconds", 20, MAX_SECONDS) * bounded("windows", 5, 100));
        List<byte[]> bodies = bodies(samples);
        LeanPoster lean = leanOrNull();
        if (windows != null) {
            warmUp(clients, rate, bodies, lean);
        }
        long jobsBefore = db.count("SELECT COUNT(*) FROM jobs");
        IngestWindows.Snapshot before = windows == null && flags.containsKey("server-pid") ? snapshot() : null;
        if (windows != null) {
            windows.edge(snapshot()); // before the first post is due, so the scrape delays none
        }
        ScheduledExecutorService[] edges = new ScheduledExecutorService[1];
        Posted posted = post(traces, rate, clients, bodies, lean,
                start -> edges[0] = windows == null ? null : windowEdges(windows, start));
        if (windows != null) {
            edges[0].shutdownNow();
            windows.edge(snapshot()); // the last window ends with its last answer
        }
        long[] latency = posted.latency();
        ConcurrentLinkedQueue<String> jobs = posted.jobs();
        AtomicInteger errors = posted.errors();
        long startMillis = posted.startMillis();
        double enqueueSeconds = posted.seconds();
        awaitDrained();
        double endToEndSeconds = (lastFinishedMillis() - startMillis) / 1000.0;
        long succeeded = succeeded(jobs);
        System.out.printf(Locale.ROOT, "ingest: %d traces x %d samples, %d clients, %s%n", traces, samples, clients,
                rate == 0 ? "unpaced (as fast as taken)" : "paced at " + rate + " traces/s offered");
        System.out.printf(Locale.ROOT, "  enqueue: %.1f s, %.0f traces/s; latency p50 %.1f ms, p99 %.1f ms, max %.1f ms%n",
                enqueueSeconds, traces / enqueueSeconds, percentile(latency, 50), percentile(latency, 99), percentile(latency, 100));
        System.out.printf(Locale.ROOT, "  stored and solved: %.1f s end to end, %.0f traces/s sustained%n",
                endToEndSeconds, traces / endToEndSeconds);
        System.out.printf(Locale.ROOT, "  errors %d, jobs succeeded %d of %d accepted (%d jobs in the database before)%n",
                errors.get(), succeeded, jobs.size(), jobsBefore);
        if (rate == 0 && flags.containsKey("target-rate")) {
            printRateAgainstTarget(traces / endToEndSeconds);
        }
        JvmLog log = JvmLog.read(pathOrNull("jvm-log"));
        if (before != null) {
            System.out.println("  from the first post until the queue drained:");
            IngestWindows.printCauses(before, snapshot(), log);
        }
        boolean windowsWithin = windows == null || windows.print(latency, log);
        return errors.get() == 0 && succeeded == traces && windowsWithin;
    }

    /** What a run of posts left: each post's latency from its due time, the jobs accepted, the failures. */
    private record Posted(long[] latency, ConcurrentLinkedQueue<String> jobs, AtomicInteger errors, long startMillis,
                          double seconds) {
    }

    /**
     * {@code traces} posts by {@code clients} threads, paced at {@code rate} a second (0: as fast
     * as taken); {@code onStart} hears the System.nanoTime the first post is due at.
     */
    private Posted post(int traces, int rate, int clients, List<byte[]> bodies, LeanPoster lean, LongConsumer onStart)
            throws InterruptedException {
        long[] latency = new long[traces];
        AtomicInteger next = new AtomicInteger();
        AtomicInteger errors = new AtomicInteger();
        ConcurrentLinkedQueue<String> jobs = new ConcurrentLinkedQueue<>();
        long startMillis = System.currentTimeMillis();
        long start = System.nanoTime();
        onStart.accept(start);
        runClients(clients, Duration.ofSeconds(MAX_SECONDS), () -> {
            int i = next.getAndIncrement();
            if (i >= traces) {
                return false;
            }
            long due = rate == 0 ? System.nanoTime() : start + (long) (i * 1e9 / rate);
            long wait = due - System.nanoTime();
            if (wait > 0) {
                TimeUnit.NANOSECONDS.sleep(wait);
            }
            try {
                Http.Reply r = lean == null ? http.postTrace(unit(i), bodies.get(i % bodies.size()), null)
                        : lean.post("/v1/units/" + unit(i) + "/traces" + Http.DEMO_VERSION_QUERY, "text/csv",
                        bodies.get(i % bodies.size()));
                latency[i] = System.nanoTime() - due;
                if (r.status() == 202) {
                    jobs.add(r.json().path("jobId").asText());
                } else {
                    errors.incrementAndGet();
                    System.err.println("post " + i + ": " + r.status() + " " + r.body());
                }
            } catch (IOException e) {
                latency[i] = System.nanoTime() - due;
                errors.incrementAndGet();
                System.err.println("post " + i + ": " + e);
            }
            return true;
        });
        return new Posted(latency, jobs, errors, startMillis, (System.nanoTime() - start) / 1e9);
    }

    /**
     * --warmup-rounds R: before the measured windows, in this same JVM and over the same
     * connections, rounds of one window each at the same rate, printed but not counted, until a
     * round saw fewer than --quiet-jit server JIT compilations (default 200) or R rounds ran.
     * The windows follow at once: the server is never idle in between.
     */
    private void warmUp(int clients, int rate, List<byte[]> bodies, LeanPoster lean) throws Exception {
        int rounds = flags.containsKey("warmup-rounds") ? bounded("warmup-rounds", 1, 100) : 0;
        int quietJit = bounded("quiet-jit", 200, Integer.MAX_VALUE - 1);
        int posts = rate * bounded("window-seconds", 20, MAX_SECONDS);
        for (int round = 1; round <= rounds; round++) {
            Posted p = post(posts, rate, clients, bodies, lean, start -> { });
            long end = System.currentTimeMillis();
            JvmLog.Tally jit = JvmLog.Tally.of(JvmLog.read(pathOrNull("jvm-log")).compilations, p.startMillis(), end);
            System.out.printf(Locale.ROOT, "  warm-up round %d (not counted): %d posts, p50 %.1f ms, p99 %.1f ms, errors %d;"
                            + " server JIT %d compilations%n", round, posts, percentile(p.latency(), 50),
                    percentile(p.latency(), 99), p.errors().get(), jit.count());
            if (jit.count() < quietJit) {
                return;
            }
        }
    }

    private IngestWindows windowsOrNull(int rate) {
        if (!flags.containsKey("windows")) {
            return null;
        }
        if (rate == 0) {
            throw new IllegalArgumentException("got --windows without --rate, expected windows of a paced run");
        }
        int seconds = bounded("window-seconds", 20, MAX_SECONDS);
        return new IngestWindows(bounded("windows", 5, 100), rate * seconds, seconds,
                Double.parseDouble(flags.getOrDefault("target-p99-ms", "NaN")), numbers("baseline-p99-ms"));
    }

    /** A snapshot at each window's end but the last (taken when the posts end). */
    private ScheduledExecutorService windowEdges(IngestWindows windows, long startNanos) {
        ScheduledExecutorService timer = Executors.newSingleThreadScheduledExecutor();
        long windowNanos = TimeUnit.SECONDS.toNanos(bounded("window-seconds", 20, MAX_SECONDS));
        for (int w = 1; w < bounded("windows", 5, 100); w++) {
            timer.schedule(() -> windows.edge(snapshot()), startNanos + w * windowNanos - System.nanoTime(),
                    TimeUnit.NANOSECONDS);
        }
        return timer;
    }

    private IngestWindows.Snapshot snapshot() {
        return IngestWindows.snapshot(() -> {
            try {
                Http.Reply r = http.get("/metrics");
                return r.status() == 200 ? MetricsText.parse(r.body()) : MetricsText.EMPTY;
            } catch (IOException | InterruptedException e) {
                return MetricsText.EMPTY;
            }
        }, Long.parseLong(flags.getOrDefault("server-pid", "0")));
    }

    /** The sustained rate beside the target and the baseline range given as flags. */
    private void printRateAgainstTarget(double sustained) {
        double target = Double.parseDouble(flags.get("target-rate"));
        double[] baseline = numbers("baseline-rate");
        System.out.printf(Locale.ROOT, "  sustained %.0f traces/s = %.2f x target %.0f/s; %s x baseline %s traces/s%n",
                sustained, sustained / target, target,
                Arrays.stream(baseline).mapToObj(b -> String.format(Locale.ROOT, "%.2f", sustained / b))
                        .reduce((x, y) -> x + "-" + y).orElse("?"),
                Arrays.stream(baseline).mapToObj(b -> String.format(Locale.ROOT, "%.0f", b))
                        .reduce((x, y) -> x + "-" + y).orElse("?"));
    }

    /** A comma-separated list of numbers; empty when the flag is absent. */
    private double[] numbers(String name) {
        String text = flags.get(name);
        return text == null ? new double[0] : Arrays.stream(text.split(",")).mapToDouble(Double::parseDouble).toArray();
    }

    private Path pathOrNull(String name) {
        return flags.containsKey(name) ? Path.of(flags.get(name)) : null;
    }

    // ---- (b) mixed: posts and reads for a fixed time

    /** Issue 15's targets for the mixed run: posts' p99 under dashboard reads, and no error. */
    static final double MIXED_POST_P99_TARGET_MS = 100.0;
    /** The family the load scripts publish, whose fleet summary the dashboard clients read. */
    static final String SUMMARY_PATH = "/v1/fleet/reefer-40/summary";

    /**
     * Client roles by the order the clients start: half post traces, a quarter read a unit's latest
     * estimate, a quarter read the fleet summary over all time (a dashboard's front page).
     */
    private enum MixedRole {
        POST, LATEST, SUMMARY;

        static MixedRole of(int client) {
            return switch (client % 4) {
                case 0, 1 -> POST;
                case 2 -> LATEST;
                default -> SUMMARY;
            };
        }
    }

    private boolean mixed() throws Exception {
        int clients = bounded("clients", 32, MAX_CLIENTS);
        int seconds = bounded("seconds", 60, MAX_SECONDS);
        int samples = bounded("samples", 1000, 2_000_000);
        int units = bounded("units", 64, 10_000);
        // --warmup-seconds W: the same mix for W seconds first, printed but not counted (the server's
        // JIT and heap settle; a cold start is what the unpaced ingest run measures).
        int warmup = flags.containsKey("warmup-seconds") ? bounded("warmup-seconds", 0, MAX_SECONDS) : 0;
        List<byte[]> bodies = bodies(samples);
        // Seed: one solved trace per unit, so every "latest estimate" read has an answer.
        for (int u = 0; u < units; u++) {
            Http.Reply r = http.postTrace(unit(u), bodies.get(u % bodies.size()), null);
            if (r.status() != 202) {
                throw new IllegalStateException("seed post: " + r.status() + " " + r.body());
            }
        }
        awaitDrained();
        LeanPoster lean = leanOrNull();
        AtomicLong posts = new AtomicLong();
        if (warmup > 0) {
            Mix w = mix(clients, warmup, units, bodies, lean, posts);
            System.out.printf(Locale.ROOT, "  warm-up (not counted): %d s of the same mix, posts p99 %.1f ms, errors %d%n",
                    warmup, percentile(w.nanos(MixedRole.POST), 99), w.errors().get());
            awaitDrained();
        }
        IngestWindows.Snapshot before = flags.containsKey("server-pid") ? snapshot() : null;
        Mix m = mix(clients, seconds, units, bodies, lean, posts);
        IngestWindows.Snapshot after = before == null ? null : snapshot();
        awaitDrained();
        List<String> jobIds = m.acked().stream().map(a -> a[1]).toList();
        Set<String> stored = Set.copyOf(db.strings("SELECT id FROM traces"));
        long lost = m.acked().stream().filter(a -> !stored.contains(a[0])).count();
        long succeeded = succeeded(jobIds);
        long estimates = db.count("SELECT count(*) FROM estimates");
        System.out.printf(Locale.ROOT, "mixed: %d clients (%d posting, %d reading the latest estimate, %d reading the"
                + " all-time fleet summary), %.0f s, traces of %d samples, %d units, %d estimates at the end%n", clients,
                count(clients, MixedRole.POST), count(clients, MixedRole.LATEST), count(clients, MixedRole.SUMMARY),
                m.seconds(), samples, units, estimates);
        for (MixedRole role : MixedRole.values()) {
            long[] nanos = m.nanos(role);
            System.out.printf(Locale.ROOT, "  %-7s %6d requests, %5.0f/s; latency p50 %.1f ms, p99 %.1f ms, max %.1f ms%n",
                    role.name().toLowerCase(Locale.ROOT), nanos.length, nanos.length / m.seconds(), percentile(nanos, 50),
                    percentile(nanos, 99), percentile(nanos, 100));
        }
        int errors = m.errors().get();
        System.out.printf(Locale.ROOT, "  %d traces accepted, errors %d, 503s retried after Retry-After %d, lost traces %d,"
                + " jobs succeeded %d of %d accepted%n", m.acked().size(), errors, m.throttled().get(), lost, succeeded,
                m.acked().size());
        if (before != null) {
            System.out.println("  while the clients ran (what a slow answer may have waited for):");
            IngestWindows.printCauses(before, after, JvmLog.read(pathOrNull("jvm-log")));
        }
        double postP99 = percentile(m.nanos(MixedRole.POST), 99);
        System.out.printf(Locale.ROOT, "  target: posts p99 %.1f ms <= %.0f ms: %s; errors %d = 0: %s%n", postP99,
                MIXED_POST_P99_TARGET_MS, postP99 <= MIXED_POST_P99_TARGET_MS ? "met" : "NOT met", errors,
                errors == 0 ? "met" : "NOT met");
        return errors == 0 && lost == 0 && succeeded == m.acked().size();
    }

    /** What a run of the mix left: latencies by role, traces acknowledged (traceId, jobId), errors, 503s, its length. */
    private record Mix(Map<MixedRole, ConcurrentLinkedQueue<Long>> latency, ConcurrentLinkedQueue<String[]> acked,
                       AtomicInteger errors, AtomicInteger throttled, double seconds) {
        long[] nanos(MixedRole role) {
            return latency.get(role).stream().mapToLong(Long::longValue).toArray();
        }
    }

    /** {@code clients} clients in their roles (MixedRole) for {@code seconds}, as fast as answered. */
    private Mix mix(int clients, int seconds, int units, List<byte[]> bodies, LeanPoster lean, AtomicLong posts)
            throws InterruptedException {
        ConcurrentLinkedQueue<String[]> acked = new ConcurrentLinkedQueue<>(); // traceId, jobId
        Map<MixedRole, ConcurrentLinkedQueue<Long>> latency = new EnumMap<>(MixedRole.class);
        for (MixedRole role : MixedRole.values()) {
            latency.put(role, new ConcurrentLinkedQueue<>());
        }
        AtomicInteger errors = new AtomicInteger();
        AtomicInteger throttled = new AtomicInteger();
        AtomicInteger started = new AtomicInteger();
        ThreadLocal<MixedRole> roles = ThreadLocal.withInitial(() -> MixedRole.of(started.getAndIncrement()));
        long deadline = System.nanoTime() + Duration.ofSeconds(seconds).toNanos();
        long start = System.nanoTime();
        runClients(clients, Duration.ofSeconds(seconds + 60L), () -> {
            if (System.nanoTime() > deadline) {
                return false;
            }
            MixedRole role = roles.get();
            int u = ThreadLocalRandom.current().nextInt(units);
            long t0 = System.nanoTime();
            try {
                if (role == MixedRole.POST) {
                    // As a gateway does: a 503 (queue full, database busy) is retried after its
                    // Retry-After with the same Idempotency-Key; it is counted, not an error.
                    String key = "mixed-" + posts.incrementAndGet();
                    byte[] body = bodies.get(ThreadLocalRandom.current().nextInt(bodies.size()));
                    Http.Reply r = mixedPost(lean, unit(u), body, key);
                    latency.get(role).add(System.nanoTime() - t0);
                    while (r.status() == 503 && System.nanoTime() < deadline) {
                        throttled.incrementAndGet();
                        long pause = Math.min(TimeUnit.SECONDS.toNanos(Long.parseLong(r.header("Retry-After"))),
                                deadline - System.nanoTime());
                        TimeUnit.NANOSECONDS.sleep(Math.max(0, pause));
                        long t1 = System.nanoTime();
                        r = mixedPost(lean, unit(u), body, key);
                        latency.get(role).add(System.nanoTime() - t1);
                    }
                    if (r.status() == 202) {
                        acked.add(new String[] {r.json().path("traceId").asText(), r.json().path("jobId").asText()});
                    } else if (r.status() != 503) {
                        errors.incrementAndGet();
                        System.err.println("post: " + r.status() + " " + r.body());
                    }
                } else {
                    String path = role == MixedRole.LATEST ? "/v1/units/" + unit(u) + "/estimates/latest" : SUMMARY_PATH;
                    Http.Reply r = lean == null ? http.get(path) : lean.get(path);
                    latency.get(role).add(System.nanoTime() - t0);
                    if (r.status() != 200) {
                        errors.incrementAndGet();
                        System.err.println("GET " + path + ": " + r.status() + " " + r.body());
                    }
                }
            } catch (IOException e) {
                errors.incrementAndGet();
                System.err.println("request: " + e);
            }
            return true;
        });
        return new Mix(latency, acked, errors, throttled, (System.nanoTime() - start) / 1e9);
    }

    private Http.Reply mixedPost(LeanPoster lean, String unitId, byte[] body, String key)
            throws IOException, InterruptedException {
        return lean == null ? http.postTrace(unitId, body, key)
                : lean.post("/v1/units/" + unitId + "/traces" + Http.DEMO_VERSION_QUERY, "text/csv", body, key);
    }

    private static long count(int clients, MixedRole role) {
        return java.util.stream.IntStream.range(0, clients).filter(c -> MixedRole.of(c) == role).count();
    }

    // ---- (c) one large upload, and the same parse + solve offline

    private boolean upload() throws Exception {
        int samples = bounded("samples", 1_000_000, 2_000_000);
        byte[] csv = new ReeferTraces(TEST_DATA).csv(samples, 42);
        LeanPoster lean = leanOrNull();
        long t0 = System.nanoTime();
        Http.Reply r = lean == null ? http.postTrace(unit(0), csv, null)
                : lean.post("/v1/units/" + unit(0) + "/traces" + Http.DEMO_VERSION_QUERY, "text/csv", csv);
        double postSeconds = (System.nanoTime() - t0) / 1e9;
        if (r.status() != 202) {
            System.out.println("upload: " + r.status() + " " + r.body());
            return false;
        }
        String jobId = r.json().path("jobId").asText();
        awaitDrained();
        double totalSeconds = (System.nanoTime() - t0) / 1e9;
        String state = db.strings("SELECT state FROM jobs WHERE id = '" + jobId + "'").get(0);
        System.out.printf(Locale.ROOT, "upload: %d samples, %.1f MB CSV%n", samples, csv.length / 1e6);
        System.out.printf(Locale.ROOT, "  202 after %.2f s (upload, parse, check, store); job %s after %.2f s in all%n",
                postSeconds, state, totalSeconds);
        return state.equals("succeeded");
    }

    private boolean offline() throws Exception {
        int samples = bounded("samples", 1_000_000, 2_000_000);
        byte[] csv = new ReeferTraces(TEST_DATA).csv(samples, 42);
        ModelDocument model = Json.mapper(Limits.DEFAULTS).readValue(Files.readAllBytes(ReeferTraces.modelFile(TEST_DATA)),
                ModelDocument.class);
        for (int run = 1; run <= 2; run++) {
            long t0 = System.nanoTime();
            ParsedTrace parsed = new TraceReader(Limits.DEFAULTS).readCsv(new ByteArrayInputStream(csv), model, TraceOptions.NONE);
            long t1 = System.nanoTime();
            // As the service's estimate job solves: no series kept (the series route rebuilds it).
            DocumentSolver.Outcome outcome = DocumentSolver.solve(model, parsed, false, Limits.DEFAULTS);
            long t2 = System.nanoTime();
            System.out.printf(Locale.ROOT, "offline run %d: %d samples, parse %.2f s, solve %.2f s, parse + solve %.2f s (%s)%n",
                    run, samples, (t1 - t0) / 1e9, (t2 - t1) / 1e9, (t2 - t0) / 1e9, outcome.getClass().getSimpleName());
        }
        return true;
    }

    // ---- shared

    private interface Step {
        /** One request; false when the client is done. */
        boolean run() throws Exception;
    }

    private static void runClients(int clients, Duration bound, Step step) throws InterruptedException {
        ExecutorService pool = Executors.newFixedThreadPool(clients);
        for (int c = 0; c < clients; c++) {
            pool.execute(() -> {
                try {
                    while (step.run()) {
                        // next request
                    }
                } catch (Exception e) {
                    throw new IllegalStateException(e);
                }
            });
        }
        pool.shutdown();
        if (!pool.awaitTermination(bound.toSeconds(), TimeUnit.SECONDS)) {
            pool.shutdownNow();
            throw new IllegalStateException("clients still running after " + bound);
        }
    }

    private List<byte[]> bodies(int samples) {
        ReeferTraces reefer = new ReeferTraces(TEST_DATA);
        List<byte[]> bodies = new ArrayList<>();
        for (int i = 0; i < BODY_POOL; i++) {
            bodies.add(reefer.csv(samples, i));
        }
        return bodies;
    }

    /** --client lean: kept-alive plain sockets instead of java.net.http, so the driver takes less of the CPU it shares. */
    private LeanPoster leanOrNull() {
        return "lean".equals(flags.get("client")) ? new LeanPoster(flags.getOrDefault("base", "http://127.0.0.1:8080")) : null;
    }

    private static String unit(int i) {
        return String.format(Locale.ROOT, "RCX-%05d", 20_000 + i % 1000);
    }

    private void awaitDrained() throws InterruptedException {
        if (!db.awaitDrained(DRAIN_BOUND, Duration.ofMillis(20))) {
            throw new IllegalStateException("queue not drained within " + DRAIN_BOUND);
        }
    }

    private long lastFinishedMillis() {
        return db.count("SELECT MAX(finished_at) FROM jobs");
    }

    private long succeeded(Iterable<String> jobIds) {
        Set<String> ok = Set.copyOf(db.strings("SELECT id FROM jobs WHERE state = 'succeeded'"));
        long n = 0;
        for (String id : jobIds) {
            n += ok.contains(id) ? 1 : 0;
        }
        return n;
    }

    private int bounded(String name, int fallback, int max) {
        int v = Integer.parseInt(flags.getOrDefault(name, Integer.toString(fallback)));
        if (v < 1 || v > max) {
            throw new IllegalArgumentException("got --" + name + " " + v + ", expected 1.." + max);
        }
        return v;
    }

    static double percentile(long[] nanos, int p) {
        if (nanos.length == 0) {
            return Double.NaN;
        }
        long[] sorted = nanos.clone();
        Arrays.sort(sorted);
        int index = (int) Math.ceil(p / 100.0 * sorted.length) - 1;
        return sorted[Math.max(0, Math.min(sorted.length - 1, index))] / 1e6;
    }

    private static void requireLoopback(String base) {
        String host = URI.create(base).getHost();
        if (!Set.of("127.0.0.1", "localhost", "[::1]", "::1").contains(host)) {
            throw new IllegalArgumentException("got base " + base + ", expected a loopback address (127.0.0.1): load goes nowhere else");
        }
    }
}
