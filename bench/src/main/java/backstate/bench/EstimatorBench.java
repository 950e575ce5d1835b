package backstate.bench;

import backstate.estimation.Estimate;
import backstate.estimation.EstimationOptions;
import backstate.estimation.EstimationResult;
import backstate.estimation.InitialStateEstimator;
import backstate.estimation.Trace;
import java.io.IOException;
import java.io.PrintWriter;
import java.lang.management.ManagementFactory;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.Locale;
import java.util.stream.Collectors;

/**
 * Times {@link InitialStateEstimator#solve} on prefixes of the benchmark trace and measures its memory.
 *
 * <p>Per trace length: {@code warmups} untimed solves, and more until {@link #WARMUP_SECONDS} have
 * passed (JIT compilation), then {@code repeats} timed
 * ones (wall clock and bytes allocated by this thread, medians reported), then one more solve under
 * {@link LiveHeapSampler} for the peak live heap above what was live before it (the trace itself).
 * The series is not kept ({@code keepSeries=false}), the memory-bounded mode the issue asks about.
 *
 * <p>A plain main rather than a JMH harness: one operation takes 0.1 s to seconds, so timer
 * resolution and dead-code elimination do not matter, and the run needs a chosen {@code -Xmx} and
 * allocation counters that a plain JVM gives directly.
 *
 * <p>usage: EstimatorBench TRACE_FILE RESULT_TSV WARMUPS REPEATS N [N ...]; one TSV row per N.
 */
public final class EstimatorBench {
    static final double MB = 1024.0 * 1024.0;
    /** Warm-up runs at least this long as well as the given count: C2 compiles the passes within about a second. */
    static final double WARMUP_SECONDS = 2.0;
    static final String HEADER = "samples\tmax_heap_mb\tmedian_s\tmin_s\tmax_s\talloc_mb\tlive_peak_mb"
            + "\tlive_samples\tcondition\tflags\tx0\ttrace_mb";

    private EstimatorBench() {
    }

    public static void main(String[] args) throws IOException {
        if (args.length < 5) {
            throw new IllegalArgumentException("got " + args.length
                    + " arguments, expected TRACE_FILE RESULT_TSV WARMUPS REPEATS N [N ...]");
        }
        TraceFile file = TraceFile.read(Path.of(args[0]));
        int warmups = Integer.parseInt(args[2]);
        int repeats = Integer.parseInt(args[3]);
        double maxHeapMb = Runtime.getRuntime().maxMemory() / MB;
        System.out.printf(Locale.ROOT, "Java %s, max heap %.0f MB, %d processors%n",
                System.getProperty("java.vm.version"), maxHeapMb, Runtime.getRuntime().availableProcessors());
        try (PrintWriter out = new PrintWriter(Files.newBufferedWriter(Path.of(args[1])))) {
            out.println(HEADER);
            for (int i = 4; i < args.length; i++) {
                String row = measure(file.prefix(Integer.parseInt(args[i])), file, warmups, repeats, maxHeapMb);
                out.println(row);
                out.flush();
            }
        }
    }

    private static String measure(Trace trace, TraceFile file, int warmups, int repeats, double maxHeapMb) {
        EstimationOptions options = EstimationOptions.defaults().withKeepSeries(false);
        com.sun.management.ThreadMXBean threads =
                (com.sun.management.ThreadMXBean) ManagementFactory.getThreadMXBean();
        long warmupEnd = System.nanoTime() + (long) (WARMUP_SECONDS * 1e9);
        for (int i = 0; i < warmups || System.nanoTime() < warmupEnd; i++) {
            InitialStateEstimator.solve(file.model, trace, options);
        }
        double[] seconds = new double[repeats];
        double[] allocatedMb = new double[repeats];
        for (int i = 0; i < repeats; i++) {
            long bytes = threads.getCurrentThreadAllocatedBytes();
            long start = System.nanoTime();
            InitialStateEstimator.solve(file.model, trace, options);
            seconds[i] = (System.nanoTime() - start) * 1e-9;
            allocatedMb[i] = (threads.getCurrentThreadAllocatedBytes() - bytes) / MB;
        }
        long baseline = LiveHeapSampler.liveBytes();
        EstimationResult result;
        LiveHeapSampler sampler = LiveHeapSampler.start();
        try (sampler) {
            result = InitialStateEstimator.solve(file.model, trace, options);
        }
        if (!(result instanceof Estimate estimate)) {
            throw new IllegalStateException("got " + result + ", expected an estimate of an observable benchmark model");
        }
        double livePeakMb = (sampler.peakBytes() - baseline) / MB;
        double[] sorted = seconds.clone();
        Arrays.sort(sorted);
        System.out.printf(Locale.ROOT, "N=%d: median %.4f s (min %.4f, max %.4f), allocated %.2f MB/solve, "
                        + "peak live heap +%.2f MB over %d samples%n", trace.samples(), median(seconds), sorted[0],
                sorted[sorted.length - 1], median(allocatedMb), livePeakMb, sampler.samples());
        return String.join("\t", String.valueOf(trace.samples()), format(maxHeapMb), format(median(seconds)),
                format(sorted[0]), format(sorted[sorted.length - 1]), format(median(allocatedMb)),
                format(livePeakMb), String.valueOf(sampler.samples()),
                format(estimate.conditioning().conditionNumber()),
                estimate.flags().stream().map(Enum::name).sorted().collect(Collectors.joining(",")),
                Arrays.stream(estimate.initialState(file.model.states())).mapToObj(Double::toString)
                        .collect(Collectors.joining(",")),
                format(traceMb(trace)));
    }

    /** The trace's own arrays (times, outputs, inputs), which the solve reads and the harness holds. */
    static double traceMb(Trace trace) {
        return (double) trace.samples() * (1 + trace.outputCount() + trace.inputCount()) * Double.BYTES / MB;
    }

    static double median(double[] values) {
        double[] sorted = values.clone();
        Arrays.sort(sorted);
        int mid = sorted.length / 2;
        return sorted.length % 2 == 1 ? sorted[mid] : 0.5 * (sorted[mid - 1] + sorted[mid]);
    }

    private static String format(double value) {
        return String.format(Locale.ROOT, "%.6g", value);
    }
}
