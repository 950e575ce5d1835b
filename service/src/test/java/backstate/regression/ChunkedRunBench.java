package backstate.regression;

import backstate.formats.Limits;
import backstate.jobs.ClaimedJob;
import backstate.jobs.HandlersByKind;
import backstate.jobs.WorkerPool;
import backstate.store.NewRegression;
import backstate.store.NewTrace;
import backstate.store.SqliteDatabase;
import backstate.store.TimeFilter;
import backstate.store.TraceRef;
import backstate.store.TraceRow;
import backstate.store.TraceSelection;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Clock;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;

/**
 * Wall time of one regression run (demo family, v1 against v2) over N stored traces on SQLite:
 * in one piece on one worker (the baseline), split into chunks on one "replica" (a worker pool
 * of one solving slot), and on two such pools sharing the store. Prints a Markdown table; run by
 * bench/regression-chunks.sh, never by the test suite, and asserts nothing. The N traces are the
 * 20 demo traces stored again under other unit IDs.
 *
 * <p>Arguments: N (default 2000), traces per chunk (default {@link Chunking#DEFAULT_TRACES_PER_CHUNK}).
 */
public final class ChunkedRunBench {
    private static final int REPEATS = 3;
    private static final Set<String> FINISHED = Set.of("succeeded", "failed", "cancelled");

    private ChunkedRunBench() {
    }

    public static void main(String[] args) throws Exception {
        int traces = args.length > 0 ? Integer.parseInt(args[0]) : 2000;
        int perChunk = args.length > 1 ? Integer.parseInt(args[1]) : Chunking.DEFAULT_TRACES_PER_CHUNK;
        Path dir = Files.createTempDirectory("backstate-regression-bench");
        Clock clock = Clock.systemUTC();
        try (DemoRuns demo = new DemoRuns(new SqliteDatabase(dir.resolve("bench.db"), clock), clock)) {
            storeCopies(demo, traces);
            Chunking chunks = new Chunking(perChunk, Chunking.DEFAULTS.poll(), Chunking.DEFAULTS.stallAfter());
            seconds(demo, 1, Chunking.NEVER); // warm-up: JIT and page cache, untimed
            seconds(demo, 2, chunks);
            double whole = median(demo, 1, Chunking.NEVER);
            double onOne = median(demo, 1, chunks);
            double onTwo = median(demo, 2, chunks);
            System.out.printf(Locale.ROOT, "regression run over %d traces, SQLite, %d cores, %d traces a chunk%n%n",
                    traces, Runtime.getRuntime().availableProcessors(), perChunk);
            System.out.println("| run | pools × slots | seconds (median of " + REPEATS + ") | ratio to one piece |");
            System.out.println("|---|---|---|---|");
            row("in one piece", 1, whole, whole);
            row("in chunks", 1, onOne, whole);
            row("in chunks", 2, onTwo, whole);
        }
    }

    /** The median of {@link #REPEATS} timed runs. */
    private static double median(DemoRuns demo, int pools, Chunking chunking) throws Exception {
        double[] times = new double[REPEATS];
        for (int i = 0; i < REPEATS; i++) {
            times[i] = seconds(demo, pools, chunking);
        }
        java.util.Arrays.sort(times);
        return times[REPEATS / 2];
    }

    private static void row(String run, int pools, double seconds, double baseline) {
        System.out.printf(Locale.ROOT, "| %s | %d × 1 | %.2f | %.2f |%n", run, pools, seconds, seconds / baseline);
    }

    /** Stores each demo trace again under other unit IDs until there are {@code traces} in all. */
    private static void storeCopies(DemoRuns demo, int traces) throws Exception {
        List<TraceRow> originals = new ArrayList<>();
        for (TraceRef ref : demo.store.regressions().selectTraces(new TraceSelection("reefer-40", null,
                new TimeFilter(null, null, null, null), null, 1000))) {
            originals.add(demo.store.traces().findTrace(ref.id()).orElseThrow());
        }
        for (int i = originals.size(); i < traces; i++) {
            TraceRow t = originals.get(i % originals.size());
            demo.store.traces().submitTrace(new NewTrace(t.unitId() + "-" + i / originals.size(),
                    t.family(), t.version(), t.samples(), t.windowStart(), t.windowEnd(), t.payload()), null,
                    Integer.MAX_VALUE, demo.clock.instant());
        }
        List<ClaimedJob> estimates;
        while (!(estimates = demo.store.queue().claimNext(1000, demo.clock.instant())).isEmpty()) {
            for (ClaimedJob e : estimates) {
                demo.store.queue().failIfRunning(e.id(), e.attempt(), "not under test", null, demo.clock.instant());
            }
        }
    }

    /** Seconds from queueing a run to its end, with {@code pools} pools of one solving slot working it. */
    private static double seconds(DemoRuns demo, int pools, Chunking chunking) throws Exception {
        RegressionParams params = new RegressionRequests(demo.store.models(), demo.store.regressions(), demo.mapper)
                .check(new RegressionRequest("reefer-40", 1, 2, null, null));
        List<WorkerPool> started = new ArrayList<>();
        long t0 = System.nanoTime();
        String id = demo.store.regressions().createRegression(new NewRegression(params.family(), params.baseline(),
                params.candidate(), demo.mapper.writeValueAsString(params)), Integer.MAX_VALUE, demo.clock.instant());
        for (int p = 0; p < pools; p++) {
            RegressionJobHandler handler = new RegressionJobHandler(demo.store.regressions(), demo.store.jobs(),
                    demo.store.models(), demo.store.queue(), demo.solver(demo.store), demo.mapper,
                    Limits.DEFAULTS, demo.clock, chunking);
            WorkerPool pool = new WorkerPool(demo.store.queue(), new HandlersByKind(Map.of("regression", handler)), 1,
                    demo.clock, Duration.ofMillis(50), new SimpleMeterRegistry(), Duration.ofSeconds(20),
                    WorkerPool.DEFAULT_STUCK_AFTER, WorkerPool.Policy.replicas(WorkerPool.Policy.DEFAULT_LEASE));
            pool.start();
            started.add(pool);
        }
        while (!FINISHED.contains(demo.store.jobs().findJob(id).orElseThrow().state())) {
            Thread.sleep(20);
        }
        double seconds = (System.nanoTime() - t0) / 1e9;
        started.forEach(WorkerPool::close);
        String state = demo.store.jobs().findJob(id).orElseThrow().state();
        if (!state.equals("succeeded")) {
            throw new IllegalStateException("run " + id + " ended " + state);
        }
        return seconds;
    }
}
