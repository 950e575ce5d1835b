package backstate.reliability;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.time.OffsetDateTime;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The load driver's readers of what the server says about itself: the Prometheus text of
 * /metrics and HotSpot's unified JVM log. The inputs are lines as the service and JDK 17 wrote
 * them in a bench run (copied, not made up), and the expected figures are worked by hand.
 */
class IngestWindowsPartsTest {

    @TempDir
    Path dir;

    /** Exposition format 0.0.4 (prometheus.io/docs/instrumenting/exposition_formats): cumulative buckets by "le". */
    private static final String BEFORE = """
            # HELP backstate_store_write_wait_seconds time from handing a write to the writer thread
            # TYPE backstate_store_write_wait_seconds histogram
            backstate_store_write_wait_seconds_bucket{le="0.001"} 10.0
            backstate_store_write_wait_seconds_bucket{le="0.01"} 20.0
            backstate_store_write_wait_seconds_bucket{le="0.1"} 20.0
            backstate_store_write_wait_seconds_bucket{le="+Inf"} 20.0
            backstate_store_write_wait_seconds_count 20.0
            backstate_store_write_wait_seconds_sum 0.05
            """;
    private static final String AFTER = """
            backstate_store_write_wait_seconds_bucket{le="0.001"} 60.0
            backstate_store_write_wait_seconds_bucket{le="0.01"} 168.0
            backstate_store_write_wait_seconds_bucket{le="0.1"} 219.0
            backstate_store_write_wait_seconds_bucket{le="+Inf"} 220.0
            backstate_store_write_wait_seconds_count 220.0
            backstate_store_write_wait_seconds_sum 1.25
            """;

    @Test
    void two_scrapes_give_the_bucket_bound_of_a_quantile_of_what_happened_between_them() {
        MetricsText a = MetricsText.parse(BEFORE);
        MetricsText b = MetricsText.parse(AFTER);
        String name = "backstate_store_write_wait_seconds";
        // Between the scrapes: 200 waits, 50 under 1 ms, 148 under 10 ms, 199 under 100 ms, 1 beyond.
        assertEquals(200, b.sum(name + "_count") - a.sum(name + "_count"));
        assertEquals(10.0, MetricsText.quantileBoundMillis(a.buckets(name, l -> true), b.buckets(name, l -> true), 0.5));
        assertEquals(100.0, MetricsText.quantileBoundMillis(a.buckets(name, l -> true), b.buckets(name, l -> true), 0.99));
        assertEquals(Double.POSITIVE_INFINITY,
                MetricsText.quantileBoundMillis(a.buckets(name, l -> true), b.buckets(name, l -> true), 1.0));
        assertTrue(Double.isNaN(MetricsText.quantileBoundMillis(a.buckets(name, l -> true), a.buckets(name, l -> true), 0.99)),
                "no observations between two equal scrapes");
    }

    @Test
    void the_jvm_log_yields_gc_pauses_safepoints_and_compilations_by_wall_clock() throws Exception {
        Path log = dir.resolve("jvm.log");
        Files.write(log, List.of(
                "[2026-12-02T12:39:15.347+0000][gc          ] Using G1",
                "[2026-12-02T12:39:20.624+0000][gc          ] GC(3) Pause Young (Concurrent Start) (Metadata GC Threshold)"
                        + " 46M->18M(380M) 60.682ms",
                "[2026-12-02T12:39:20.679+0000][gc          ] GC(4) Concurrent Mark Cycle 54.412ms",
                "[2026-12-02T12:39:20.656+0000][gc          ] GC(4) Pause Remark 22M->21M(77M) 7.288ms",
                "[2026-12-02T12:39:26.268+0000][safepoint   ] Safepoint \"G1CollectForAllocation\", Time since last:"
                        + " 274384039 ns, Reaching safepoint: 686609 ns, Cleanup: 133095 ns, At safepoint: 121483212 ns,"
                        + " Total: 122302916 ns",
                "[2026-12-02T12:41:39.530+0000][jit,compilation] 1       3       java.lang.Object::<init> (1 bytes)"));
        JvmLog read = JvmLog.read(log);
        long t0 = OffsetDateTime.parse("2026-12-02T12:39:20.000Z").toInstant().toEpochMilli();
        // The concurrent cycle is not a pause; the two pauses sum to 60.682 + 7.288 ms.
        JvmLog.Tally gc = JvmLog.Tally.of(read.gcPauses, t0, t0 + 1000);
        assertEquals(2, gc.count());
        assertEquals(67.970, gc.totalMillis(), 1e-9);
        assertEquals(60.682, gc.longestMillis(), 1e-9);
        JvmLog.Tally safepoints = JvmLog.Tally.of(read.safepoints, t0, t0 + 10_000);
        assertEquals(1, safepoints.count());
        assertEquals(122.302916, safepoints.longestMillis(), 1e-9);
        assertEquals(0, JvmLog.Tally.of(read.compilations, t0, t0 + 10_000).count(), "the compilation came later");
        assertEquals(1, JvmLog.Tally.of(read.compilations, t0, t0 + 200_000).count());
    }
}
