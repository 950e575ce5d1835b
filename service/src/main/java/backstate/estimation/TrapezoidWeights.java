package backstate.estimation;

/**
 * Trapezoid-rule weights per channel over its present samples, so that Σ w r² approximates the
 * integral of r² over the window (composite trapezoid rule, e.g. Press et al. 2007, Numerical
 * Recipes §4.1). Streams forward with one look-ahead pointer per channel: O(N·p) in all.
 */
final class TrapezoidWeights {
    private final Trace trace;
    private final int p;
    private final double[] previousTime;
    private final int[] nextPresent;

    /** Weights for samples from {@code start} on; each channel's last present sample before it is looked up once. */
    TrapezoidWeights(Trace trace, int start) {
        this.trace = trace;
        this.p = trace.outputCount();
        this.previousTime = new double[p];
        this.nextPresent = new int[p];
        java.util.Arrays.fill(previousTime, Double.NaN);
        for (int j = 0; j < p; j++) {
            for (int k = start - 1; k >= 0; k--) {
                if (!Double.isNaN(trace.output(k, j))) {
                    previousTime[j] = trace.time(k);
                    break;
                }
            }
        }
    }

    /** Weight of channel j's present sample k; must be called for present samples in increasing k. */
    double weight(int k, int j) {
        int next = nextPresent[j];
        if (next <= k) {
            next = k + 1;
            while (next < trace.samples() && Double.isNaN(trace.output(next, j))) {
                next++;
            }
            nextPresent[j] = next;
        }
        double t = trace.time(k);
        double left = Double.isNaN(previousTime[j]) ? t : previousTime[j];
        double right = next < trace.samples() ? trace.time(next) : t;
        previousTime[j] = t;
        return 0.5 * (right - left);
    }
}
