package backstate.reliability;

import java.lang.management.GarbageCollectorMXBean;
import java.lang.management.ManagementFactory;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.StringJoiner;
import java.util.TreeMap;
import java.util.function.Predicate;
import java.util.function.Supplier;

/**
 * A paced ingest run cut into windows of equal length, each reported with what else happened in
 * it, so a tail can be traced to its cause: the posts' latency (p50, p99, max, against the target
 * and the baseline), the server's GC pauses and safepoints and JIT compilations (from its JVM
 * log, {@link JvmLog}), the write path's own timers from /metrics ({@code SqliteMeters} in the
 * service: wait for the writer, statements, COMMIT, checkpoints), the server's CPU by thread
 * group ({@link ThreadCpu}), the driver's own GC (it shares the machine and its pauses delay the
 * clock of every post) and the load average.
 */
final class IngestWindows {

    /** What was true at a window's edge. */
    record Snapshot(long epochMillis, MetricsText metrics, Map<String, Double> serverCpu, long driverGcCount,
                    long driverGcMillis, double driverCpuSeconds, String loadAverage) {
    }

    private static final Predicate<String> TRACE_POSTS = l -> l.contains("method=\"POST\"") && l.contains("/traces")
            && l.contains("status=\"202\"");

    private final int windows;
    private final int postsPerWindow;
    private final int seconds;
    private final double targetP99Millis;
    private final double[] baselineP99Millis;
    private final List<Snapshot> edges = new ArrayList<>();

    IngestWindows(int windows, int postsPerWindow, int seconds, double targetP99Millis, double[] baselineP99Millis) {
        this.windows = windows;
        this.postsPerWindow = postsPerWindow;
        this.seconds = seconds;
        this.targetP99Millis = targetP99Millis;
        this.baselineP99Millis = baselineP99Millis;
    }

    static Snapshot snapshot(Supplier<MetricsText> scrape, long serverPidOrZero) {
        long count = 0;
        long millis = 0;
        for (GarbageCollectorMXBean gc : ManagementFactory.getGarbageCollectorMXBeans()) {
            count += Math.max(0, gc.getCollectionCount());
            millis += Math.max(0, gc.getCollectionTime());
        }
        Map<String, Double> cpu = serverPidOrZero == 0 ? Map.of() : ThreadCpu.of(serverPidOrZero);
        double driverCpu = ManagementFactory.getOperatingSystemMXBean() instanceof com.sun.management.OperatingSystemMXBean os
                ? os.getProcessCpuTime() / 1e9 : Double.NaN;
        return new Snapshot(System.currentTimeMillis(), scrape.get(), cpu, count, millis, driverCpu, loadAverage());
    }

    void edge(Snapshot s) {
        edges.add(s);
    }

    /**
     * Prints one block per window and a verdict line; true when every window's p99 is within the
     * target. {@code latencyNanos[i]} is post i's, from its due time.
     */
    boolean print(long[] latencyNanos, JvmLog log) {
        double worst = 0;
        int within = 0;
        for (int w = 0; w < windows && w + 1 < edges.size(); w++) {
            long[] mine = Arrays.copyOfRange(latencyNanos, w * postsPerWindow, (w + 1) * postsPerWindow);
            double p99 = LoadDriver.percentile(mine, 99);
            worst = Math.max(worst, p99);
            within += p99 <= targetP99Millis ? 1 : 0;
            Snapshot a = edges.get(w);
            Snapshot b = edges.get(w + 1);
            System.out.printf(Locale.ROOT, "  window %d of %d (%d s, %d posts): p50 %.1f ms, p99 %.1f ms, max %.1f ms;"
                            + " p99 = %.2f x target %.0f ms, %.2f x baseline %.0f ms; load %s%n",
                    w + 1, windows, seconds, mine.length, LoadDriver.percentile(mine, 50), p99,
                    LoadDriver.percentile(mine, 100), p99 / targetP99Millis, targetP99Millis,
                    p99 / baseline(w), baseline(w), b.loadAverage());
            printCauses(a, b, log);
        }
        System.out.printf(Locale.ROOT, "  windows with p99 <= %.0f ms: %d of %d; worst p99 %.1f ms = %.2f x target,"
                        + " %.2f x the worst baseline window (%.0f ms)%n",
                targetP99Millis, within, windows, worst, worst / targetP99Millis,
                worst / Arrays.stream(baselineP99Millis).max().orElse(Double.NaN),
                Arrays.stream(baselineP99Millis).max().orElse(Double.NaN));
        return within == windows;
    }

    private double baseline(int window) {
        return baselineP99Millis.length == 0 ? Double.NaN : baselineP99Millis[window % baselineP99Millis.length];
    }

    /** What happened between two snapshots, on three indented lines. */
    static void printCauses(Snapshot a, Snapshot b, JvmLog log) {
        JvmLog.Tally gc = JvmLog.Tally.of(log.gcPauses, a.epochMillis(), b.epochMillis());
        JvmLog.Tally sp = JvmLog.Tally.of(log.safepoints, a.epochMillis(), b.epochMillis());
        JvmLog.Tally jit = JvmLog.Tally.of(log.compilations, a.epochMillis(), b.epochMillis());
        System.out.printf(Locale.ROOT, "    server GC %d pauses, %.0f ms in all, longest %.1f ms; safepoints %d, %.0f ms,"
                        + " longest %.1f ms; JIT %d compilations | driver GC %d, %d ms, CPU %.1f s%n",
                gc.count(), gc.totalMillis(), gc.longestMillis(), sp.count(), sp.totalMillis(), sp.longestMillis(),
                jit.count(), b.driverGcCount() - a.driverGcCount(), b.driverGcMillis() - a.driverGcMillis(),
                b.driverCpuSeconds() - a.driverCpuSeconds());
        MetricsText m0 = a.metrics();
        MetricsText m1 = b.metrics();
        double batches = delta(m0, m1, "backstate_store_write_batch_count");
        double writes = delta(m0, m1, "backstate_store_write_wait_seconds_count");
        System.out.printf(Locale.ROOT, "    server post p99 <= %s ms | writer: %.0f batches, %.1f writes each; wait %s;"
                        + " statements %s; COMMIT %s%n",
                bound(m0, m1, "backstate_http_latency_seconds", TRACE_POSTS, 0.99),
                batches, batches == 0 ? 0 : writes / batches, timer(m0, m1, "backstate_store_write_wait_seconds"),
                timer(m0, m1, "backstate_store_write_work_seconds"), timer(m0, m1, "backstate_store_write_commit_seconds"));
        System.out.printf(Locale.ROOT, "    checkpoints %s; WAL %.0f pages | server CPU %s%n",
                timer(m0, m1, "backstate_store_checkpoint_seconds"), m1.sum("backstate_store_wal_pages"),
                cpu(a.serverCpu(), b.serverCpu()));
    }

    /** "n, mean x ms, p99 <= y ms, max <= z ms" of a timer between two scrapes. */
    private static String timer(MetricsText a, MetricsText b, String name) {
        double n = delta(a, b, name + "_count");
        if (n == 0) {
            return "none";
        }
        double mean = delta(a, b, name + "_sum") / n * 1000;
        return String.format(Locale.ROOT, "%.0f, mean %.1f ms, p99 <= %s ms, all <= %s ms", n, mean,
                bound(a, b, name, l -> true, 0.99), bound(a, b, name, l -> true, 1.0));
    }

    private static String bound(MetricsText a, MetricsText b, String name, Predicate<String> labels, double q) {
        TreeMap<Double, Double> before = a.buckets(name, labels);
        TreeMap<Double, Double> after = b.buckets(name, labels);
        double ms = MetricsText.quantileBoundMillis(before, after, q);
        return Double.isInfinite(ms) ? "inf" : String.format(Locale.ROOT, "%.0f", ms);
    }

    private static double delta(MetricsText a, MetricsText b, String name) {
        return b.sum(name) - a.sum(name);
    }

    private static String cpu(Map<String, Double> a, Map<String, Double> b) {
        if (b.isEmpty()) {
            return "unknown";
        }
        double total = 0;
        StringJoiner parts = new StringJoiner(", ");
        for (Map.Entry<String, Double> e : b.entrySet()) {
            double used = e.getValue() - a.getOrDefault(e.getKey(), 0.0);
            total += used;
            parts.add(String.format(Locale.ROOT, "%s %.1f", e.getKey(), used));
        }
        return String.format(Locale.ROOT, "%.1f s (%s)", total, parts);
    }

    private static String loadAverage() {
        try {
            return Files.readString(Path.of("/proc/loadavg")).split(" ")[0];
        } catch (java.io.IOException e) {
            return "unknown";
        }
    }
}
