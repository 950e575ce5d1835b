package backstate.bench;

import java.util.Arrays;
import java.util.Locale;
import java.util.function.Supplier;

/** Wall time per call for the benches in the service's test sources: timed runs after as many warm-up runs. */
public final class CallTimes {
    private CallTimes() {
    }

    /** Per-call times in nanoseconds of {@code runs} timed runs of {@code batch} calls each, after as many warm-up runs, sorted. */
    public static double[] sorted(int runs, int batch, Supplier<Object> call) {
        double[] perCall = new double[runs];
        Object sink = null;
        for (int r = -runs; r < runs; r++) {
            long start = System.nanoTime();
            for (int i = 0; i < batch; i++) {
                sink = call.get();
            }
            if (r >= 0) {
                perCall[r] = (System.nanoTime() - start) / (double) batch;
            }
        }
        if (sink == null) {
            throw new IllegalStateException("no result");
        }
        Arrays.sort(perCall);
        return perCall;
    }

    public static double median(double[] sorted) {
        return sorted[sorted.length / 2];
    }

    /** "min / median" in milliseconds. */
    public static String minAndMedian(double[] sorted) {
        return millis(sorted[0]) + " / " + millis(median(sorted));
    }

    /** Milliseconds: one decimal from 1 ms up, else three significant places. */
    public static String millis(double nanos) {
        return nanos >= 1e6 ? String.format(Locale.ROOT, "%.1f ms", nanos * 1e-6) : String.format(Locale.ROOT, "%.3f ms", nanos * 1e-6);
    }
}
