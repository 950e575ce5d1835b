package backstate.reliability;

import backstate.formats.DocumentSolver;
import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedColumns;
import backstate.formats.ParsedTrace;
import backstate.formats.TraceCodec;
import backstate.formats.TraceOptions;
import backstate.formats.TraceReader;
import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.lang.management.ManagementFactory;
import java.lang.management.MemoryMXBean;
import java.lang.management.ThreadMXBean;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.atomic.AtomicBoolean;
import java.util.concurrent.atomic.AtomicLong;

/**
 * Large uploads, end to end and offline (run by {@code bench/load/upload.sh}, never by the test
 * suite; it prints figures and asserts nothing). For each trace size it
 * <ol>
 *   <li>times the parse ({@link TraceReader}'s columns, what the intake runs; also in CPU time, this
 *       thread's and the parse helpers' together, which a loaded machine disturbs less), the
 *       assembly of the engine's row-major trace from them, and the solve ({@link DocumentSolver})
 *       of the same CSV in this JVM, {@code offline-runs} times in turn (so a young GC, which may
 *       fall in any of the three, moves a median of many runs less than one of three); medians are
 *       over the runs after the first {@value #OFFLINE_WARM_UP}, once this JVM's compilers and heap
 *       have settled (the per-run figures it prints show them settle), and samples the live heap of parse + stored encoding ({@link TraceCodec})
 *       by forcing a GC every few milliseconds: what the intake's own code holds;</li>
 *   <li>posts it to the running server {@code runs} times, each after a forced GC there
 *       ({@code jcmd GC.run}), and reads the server's resident memory from {@code /proc}: after the
 *       GC (idle), and its peak ({@code VmHWM}, reset before the post through {@code clear_refs})
 *       until the job is done; with the post's 202 time, the job's time and the server's solve
 *       time (its own timer, from {@code /metrics}).</li>
 * </ol>
 * The first run of a size is cold for that size; medians are over the later (warm) runs.
 *
 * <pre>
 * UploadBench --base URL --db FILE --pid SERVER_PID [--sizes 1000000] [--runs 4] [--offline-runs 31] [--format csv|json]
 * </pre>
 */
public final class UploadBench {
    /** Offline runs left out of the medians while the driver's compilers and heap settle. */
    private static final int OFFLINE_WARM_UP = 11;
    private static final Path TEST_DATA = Path.of(System.getProperty("backstate.testData", "test-data"));
    private static final Duration TIMEOUT = Duration.ofMinutes(5);
    private static final double MB = 1 << 20;
    /** Live-heap sampling period: a forced GC this often while the parse and encode run. */
    private static final long SAMPLE_MILLIS = 5;
    /** Settling time after a forced GC before reading RSS (G1 uncommits concurrently). */
    private static final long SETTLE_MILLIS = 1500;
    private static final String SOLVE_TIMER = "backstate_solve_duration_seconds";
    private static final ThreadMXBean THREADS = ManagementFactory.getThreadMXBean();

    private final Http http;
    private final ServerDb db;
    private final long pid;
    private final String format;
    private final ModelDocument model;
    private final ReeferTraces traces = new ReeferTraces(TEST_DATA);

    private UploadBench(Map<String, String> flags) throws IOException {
        this.http = new Http(flags.get("base"), TIMEOUT);
        this.db = new ServerDb(Path.of(flags.get("db")));
        this.pid = Long.parseLong(flags.get("pid"));
        this.format = flags.getOrDefault("format", "csv");
        this.model = Json.mapper(Limits.DEFAULTS).readValue(Files.readAllBytes(ReeferTraces.modelFile(TEST_DATA)),
                ModelDocument.class);
    }

    public static void main(String[] args) throws Exception {
        Map<String, String> flags = new LinkedHashMap<>();
        for (int i = 0; i + 1 < args.length; i += 2) {
            flags.put(args[i].replaceFirst("^--", ""), args[i + 1]);
        }
        int runs = Integer.parseInt(flags.getOrDefault("runs", "4"));
        int offlineRuns = Integer.parseInt(flags.getOrDefault("offline-runs", "31"));
        UploadBench bench = new UploadBench(flags);
        for (String size : flags.getOrDefault("sizes", "1000000").split(",")) {
            bench.measure(Integer.parseInt(size.trim()), runs, offlineRuns).print();
        }
    }

    /**
     * One size's figures; times in seconds, memory in MB. {@code idle}: the fresh server after a
     * forced GC; {@code peakAboveIdle}: the highest peak of all runs above it; {@code peakAbove}: the
     * median over warm runs of each run's peak above the RSS after the forced GC just before it.
     */
    record Row(int samples, double bodyMb, double parse, double solve, double liveParseEncode, double post, double job,
               double serverSolve, double idle, double peakAbove, double peakAboveIdle, double afterGcAbove, double parseCpu,
               double assemble) {

        /** One line for bench/load/upload.sh to gather into its table. */
        void print() {
            System.out.printf(Locale.ROOT, "ROW %d %.2f %.4f %.4f %.1f %.4f %.4f %.4f %.1f %.1f %.1f %.1f %.4f %.4f%n", samples, bodyMb,
                    parse, solve, liveParseEncode, post, job, serverSolve, idle, peakAbove, peakAboveIdle, afterGcAbove, parseCpu, assemble);
        }
    }

    private Row measure(int samples, int runs, int offlineRuns) throws Exception {
        byte[] body = "json".equals(format) ? traces.json(samples, 42) : traces.csv(samples, 42);
        double[] parse = new double[offlineRuns];
        double[] parseCpu = new double[offlineRuns];
        double[] assemble = new double[offlineRuns];
        double[] solve = new double[offlineRuns];
        for (int r = 0; r < offlineRuns; r++) {
            long c0 = parseCpuNanos();
            long t0 = System.nanoTime();
            ParsedColumns columns = read(body);
            long t1 = System.nanoTime();
            long c1 = parseCpuNanos();
            ParsedTrace parsed = columns.assemble();
            long t2 = System.nanoTime();
            DocumentSolver.solve(model, parsed, false, Limits.DEFAULTS);
            long t3 = System.nanoTime();
            parse[r] = (t1 - t0) / 1e9;
            parseCpu[r] = (c1 - c0) / 1e9;
            assemble[r] = (t2 - t1) / 1e9;
            solve[r] = (t3 - t2) / 1e9;
        }
        double live = liveHeapOfParseAndEncode(body);
        System.out.printf(Locale.ROOT, "%d samples, %.1f MB %s: offline parse %s s (CPU of its threads %s s), assemble %s s, solve %s s;"
                        + " live heap of parse + encode %.1f MB%n",
                samples, body.length / MB, format, seconds(parse), seconds(parseCpu), seconds(assemble), seconds(solve), live);
        double[] post = new double[runs];
        double[] job = new double[runs];
        double[] serverSolve = new double[runs];
        double[] idle = new double[runs];
        double[] peak = new double[runs];
        for (int r = 0; r < runs; r++) {
            idle[r] = idleRss();
            clearPeak();
            double[] solveBefore = solveTimer();
            long t0 = System.nanoTime();
            Http.Reply reply = http.post("/v1/units/RCX-" + (30_000 + r) + "/traces" + Http.DEMO_VERSION_QUERY,
                    "json".equals(format) ? "application/json" : "text/csv", body);
            post[r] = (System.nanoTime() - t0) / 1e9;
            if (reply.status() != 202) {
                throw new IllegalStateException("upload of " + samples + " samples: " + reply.status() + " " + reply.body());
            }
            awaitDrained();
            job[r] = (System.nanoTime() - t0) / 1e9;
            peak[r] = status("VmHWM");
            double[] solveAfter = solveTimer();
            serverSolve[r] = (solveAfter[0] - solveBefore[0]) / Math.max(1, solveAfter[1] - solveBefore[1]);
            System.out.printf(Locale.ROOT, "  run %d: 202 after %.3f s, job done %.3f s, server solve %.3f s;"
                            + " RSS idle %.0f MB, peak %.0f MB (+%.0f)%n",
                    r + 1, post[r], job[r], serverSolve[r], idle[r], peak[r], peak[r] - idle[r]);
        }
        double after = idleRss();
        double[] above = new double[runs];
        for (int r = 0; r < runs; r++) {
            above[r] = peak[r] - idle[r];
        }
        double[] warmAbove = warm(above);
        System.out.printf(Locale.ROOT, "  RSS after a forced GC: %.0f MB (%+.0f MB against the idle RSS before the first run)%n",
                after, after - idle[0]);
        return new Row(samples, body.length / MB, median(settled(parse)), median(settled(solve)), live, median(warm(post)),
                median(warm(job)), median(warm(serverSolve)), idle[0], median(warmAbove),
                Arrays.stream(peak).max().orElseThrow() - idle[0], after - idle[0], median(settled(parseCpu)),
                median(settled(assemble)));
    }

    /** The body's columns, as the intake reads them (not yet the engine's row-major trace). */
    private ParsedColumns read(byte[] body) throws IOException {
        TraceReader reader = new TraceReader(Limits.DEFAULTS);
        return "json".equals(format) ? reader.readJsonColumns(new ByteArrayInputStream(body), model)
                : reader.readCsvColumns(new ByteArrayInputStream(body), model, TraceOptions.NONE, null);
    }

    /**
     * The most the parse and the stored encoding ever hold reachable at once, above what was
     * reachable before (the body itself): a sampler thread forces a full GC every
     * {@value #SAMPLE_MILLIS} ms and reads the heap in use after it.
     */
    private double liveHeapOfParseAndEncode(byte[] body) throws Exception {
        MemoryMXBean memory = ManagementFactory.getMemoryMXBean();
        TraceCodec codec = new TraceCodec(Json.mapper(Limits.DEFAULTS));
        System.gc();
        long before = memory.getHeapMemoryUsage().getUsed();
        AtomicLong most = new AtomicLong(before);
        AtomicBoolean done = new AtomicBoolean();
        Thread sampler = new Thread(() -> {
            while (!done.get()) {
                System.gc();
                most.accumulateAndGet(memory.getHeapMemoryUsage().getUsed(), Math::max);
                try {
                    Thread.sleep(SAMPLE_MILLIS);
                } catch (InterruptedException e) {
                    return;
                }
            }
        });
        sampler.start();
        byte[] payload = codec.encode(read(body));
        done.set(true);
        sampler.join();
        java.lang.ref.Reference.reachabilityFence(payload);
        return (most.get() - before) / MB;
    }

    /** Resident memory after a forced GC in the server and a moment for the heap to shrink. */
    private double idleRss() throws Exception {
        Process gc = new ProcessBuilder("jcmd", Long.toString(pid), "GC.run").redirectErrorStream(true)
                .redirectOutput(ProcessBuilder.Redirect.DISCARD).start();
        if (gc.waitFor() != 0) {
            throw new IllegalStateException("jcmd " + pid + " GC.run failed");
        }
        Thread.sleep(SETTLE_MILLIS);
        return status("VmRSS");
    }

    /** Resets the server's peak resident size (VmHWM) to its current size (Linux proc(5), clear_refs value 5). */
    private void clearPeak() throws IOException {
        Files.writeString(Path.of("/proc/" + pid + "/clear_refs"), "5");
    }

    /** A size line of /proc/PID/status, in MB. */
    private double status(String field) throws IOException {
        for (String line : Files.readAllLines(Path.of("/proc/" + pid + "/status"))) {
            if (line.startsWith(field + ":")) {
                return Long.parseLong(line.replaceAll("\\D", "")) / 1024.0;
            }
        }
        throw new IllegalStateException("no " + field + " in /proc/" + pid + "/status");
    }

    /** Sum (s) and count of the server's solve timer. */
    private double[] solveTimer() throws Exception {
        double[] sumCount = new double[2];
        for (String line : http.get("/metrics").body().split("\n")) {
            if (line.startsWith(SOLVE_TIMER + "_sum")) {
                sumCount[0] += Double.parseDouble(line.substring(line.lastIndexOf(' ') + 1));
            } else if (line.startsWith(SOLVE_TIMER + "_count")) {
                sumCount[1] += Double.parseDouble(line.substring(line.lastIndexOf(' ') + 1));
            }
        }
        return sumCount;
    }

    private void awaitDrained() throws InterruptedException {
        if (!db.awaitDrained(TIMEOUT, Duration.ofMillis(5))) {
            throw new IllegalStateException("queue not drained within " + TIMEOUT);
        }
    }

    /** All but the first (cold) run, when there is more than one. */
    /** The offline runs after the first {@link #OFFLINE_WARM_UP} (all but the first when there are no more). */
    private static double[] settled(double[] values) {
        return values.length > OFFLINE_WARM_UP ? Arrays.copyOfRange(values, OFFLINE_WARM_UP, values.length) : warm(values);
    }

    /** CPU time of this thread and of the parse's helper threads ({@code backstate-parse-helper-*}), in ns. */
    private static long parseCpuNanos() {
        long total = THREADS.getCurrentThreadCpuTime();
        for (Thread thread : Thread.getAllStackTraces().keySet()) {
            if (thread.getName().startsWith("backstate-parse-helper-")) {
                total += Math.max(0, THREADS.getThreadCpuTime(thread.getId()));
            }
        }
        return total;
    }

    private static double[] warm(double[] values) {
        return values.length > 1 ? Arrays.copyOfRange(values, 1, values.length) : values;
    }

    private static double median(double[] values) {
        double[] sorted = values.clone();
        Arrays.sort(sorted);
        int n = sorted.length;
        return n % 2 == 1 ? sorted[n / 2] : (sorted[n / 2 - 1] + sorted[n / 2]) / 2;
    }

    private static String seconds(double[] values) {
        StringBuilder out = new StringBuilder();
        for (double v : values) {
            out.append(out.length() == 0 ? "" : " ").append(String.format(Locale.ROOT, "%.3f", v));
        }
        return out.toString();
    }
}
