package backstate.reliability;

import backstate.api.TestServer;
import java.lang.management.GarbageCollectorMXBean;
import java.lang.management.ManagementFactory;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.Locale;

/**
 * The scenario of {@link SlowUploadsTest} (500 crawling uploads, round-robin reads of
 * {@code /healthz}, {@code /readyz} and an estimate) run {@code RUNS} times, each on a fresh
 * server with both upload caps at their highest (125), printing the read latencies against the target of
 * p99 ≤ 100 ms, with the garbage-collection time spent during the crawl beside them. The
 * baseline is the service before upload caps and body-rate checks, where every read hung past
 * the 2 s guard. Run by {@code bench/slow-uploads.sh}; nothing here is asserted.
 */
public final class SlowUploadsBench {
    static final double TARGET_P99_MS = 100;
    static final double BASELINE_MS = SlowUploadsTest.HANG_GUARD.toMillis();

    private SlowUploadsBench() {
    }

    public static void main(String[] args) throws Exception {
        int runs = args.length > 0 ? Integer.parseInt(args[0]) : 3;
        System.out.println("| run | reads | p50 ms | p99 ms | max ms | p99 / target 100 ms | p99 / baseline ≥ 2000 ms | GC during crawl ms | crawler answers |");
        System.out.println("|---|---|---|---|---|---|---|---|---|");
        for (int run = 1; run <= runs; run++) {
            System.out.println(oneRun(run));
        }
    }

    private static String oneRun(int run) throws Exception {
        Path dir = Files.createTempDirectory("slow-uploads-bench");
        try (TestServer server = new TestServer(dir, SlowUploadsTest.WIDEST_CAPS)) {
            server.publishDemoModels();
            String estimate = SlowUploadsTest.postAndSolveOneTrace(server);
            SlowUploadsTest.Crawl crawl = new SlowUploadsTest.Crawl(server.app().port());
            Thread crawler = new Thread(crawl, "crawlers");
            long gcBefore = gcMillis();
            crawler.start();
            SlowUploadsTest.Reads reads = new SlowUploadsTest.Reads(server.base(), List.of("/healthz", "/readyz", estimate));
            reads.until(System.nanoTime() + SlowUploadsTest.CRAWL.toNanos());
            crawl.stop = true;
            crawler.join(Duration.ofSeconds(30).toMillis());
            long gc = gcMillis() - gcBefore;
            double[] sorted = reads.latenciesMillis.stream().mapToDouble(Double::doubleValue).sorted().toArray();
            double p99 = sorted[(int) Math.ceil(sorted.length * 0.99) - 1];
            return String.format(Locale.ROOT, "| %d | %d (%d failed) | %.1f | %.1f | %.1f | %.2f | %.3f | %d | %s |", run,
                    sorted.length, reads.failures.size(), sorted[sorted.length / 2], p99, sorted[sorted.length - 1],
                    p99 / TARGET_P99_MS, p99 / BASELINE_MS, gc, crawl.answers);
        }
    }

    private static long gcMillis() {
        return ManagementFactory.getGarbageCollectorMXBeans().stream().mapToLong(GarbageCollectorMXBean::getCollectionTime).sum();
    }
}
