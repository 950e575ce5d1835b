package backstate.estimation;

import java.util.Arrays;

/**
 * Trapezoid-rule weights per channel over its present samples (composite trapezoid rule, e.g.
 * Press et al. 2007, Numerical Recipes §4.1), so that Σ w r² approximates the integral of r² over
 * the window, measured in units of the trace's mean sample spacing Δ̄ = (t_{N−1} − t_0)/(N − 1):
 * a sample inside an evenly sampled stretch of spacing Δ̄ weighs exactly 1, the two window ends ½.
 * Dimensionless weights keep a prior's pull and the information matrix independent of the time
 * unit and the sample period. Times are the engine's step units (µs ticks or sample periods), so
 * a sample inside a stretch of equal steps h weighs exactly h/Δ̄ ({@link #interior}), whichever
 * route folds it. Streams forward with one look-ahead pointer per channel: O(N·p) in all.
 */
final class TrapezoidWeights {
    private final SolveContext ctx;
    private final int p;
    private final double meanSpacing;
    private final long[] previousUnits;
    private final boolean[] hasPrevious;
    private final int[] nextPresent;

    /** Weights for samples from {@code start} on; each channel's last present sample before it is looked up once. */
    TrapezoidWeights(SolveContext ctx, int start) {
        this.ctx = ctx;
        this.p = ctx.p;
        int samples = ctx.trace.samples();
        long span = ctx.units(samples - 1);
        this.meanSpacing = samples > 1 && span > 0 ? (double) span / (samples - 1) : 1.0;
        this.previousUnits = new long[p];
        this.hasPrevious = new boolean[p];
        this.nextPresent = new int[p];
        for (int j = 0; j < p; j++) {
            for (int k = start - 1; k >= 0; k--) {
                if (!Double.isNaN(ctx.trace.output(k, j))) {
                    previousUnits[j] = ctx.units(k);
                    hasPrevious[j] = true;
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
            while (next < ctx.trace.samples() && Double.isNaN(ctx.trace.output(next, j))) {
                next++;
            }
            nextPresent[j] = next;
        }
        long units = ctx.units(k);
        long left = hasPrevious[j] ? previousUnits[j] : units;
        long right = next < ctx.trace.samples() ? ctx.units(next) : units;
        previousUnits[j] = units;
        hasPrevious[j] = true;
        return 0.5 * (right - left) / meanSpacing;
    }

    /** Weight of every sample inside a stretch of equal steps of {@code step} units with every channel present. */
    double interior(long step) {
        return step / meanSpacing;
    }

    /** Records that samples up to {@code last} (every channel present there) were weighed by another route. */
    void skipTo(int last) {
        Arrays.fill(previousUnits, ctx.units(last));
        Arrays.fill(hasPrevious, true);
        Arrays.fill(nextPresent, last + 1);
    }
}
