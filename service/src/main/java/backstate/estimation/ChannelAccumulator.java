package backstate.estimation;

import java.util.Arrays;

/**
 * Streams one channel's measured values and residuals into the statistics of {@link ChannelDiagnostics}.
 * Accumulators of consecutive stretches of a trace can be joined ({@link #append}), so that the
 * stretches can be streamed in parallel.
 */
final class ChannelAccumulator {
    /** Measured values gathered before their mean and spread are merged into the running ones. */
    static final int BATCH = 256;
    /** A batch of ones, read by {@link #flush} and never written. */
    private static final double[] ONES = ones(BATCH);

    private final double sigma;
    private final LjungBox whiteness;
    private final double[] pending = new double[BATCH];
    private int batched;
    private long count;
    /** Values already merged into meanY and spreadY: count minus the batched ones. */
    private long merged;
    private double meanY;
    private double spreadY;
    private double residualSquares;
    private double maxAbs;
    private int outliers;

    /** @param expectedCount present samples in the whole trace (not in one stretch): it fixes the Ljung–Box lags */
    ChannelAccumulator(double sigma, long expectedCount) {
        this.sigma = sigma;
        this.whiteness = new LjungBox(expectedCount);
    }

    /** Adds one present sample: measured y and residual y − ŷ. */
    void add(double y, double residual) {
        count++;
        pending[batched++] = y;
        if (batched == BATCH) {
            flush();
        }
        residualSquares += residual * residual;
        double abs = Math.abs(residual);
        maxAbs = Math.max(maxAbs, abs);
        if (abs > Conditioning.OUTLIER_SIGMAS * sigma) {
            outliers++;
        }
        whiteness.add(residual);
    }

    /**
     * Adds present samples i = from … from+count−1 of {@code ys} (measured) and {@code residuals}, in
     * order: the same sums, in the same order, as {@link #add} value by value, with the running
     * figures in locals for the whole stretch.
     */
    void addAll(double[] ys, double[] residuals, int from, int count) {
        int done = 0;
        while (done < count) {
            int take = Math.min(count - done, BATCH - batched);
            System.arraycopy(ys, from + done, pending, batched, take);
            batched += take;
            done += take;
            if (batched == BATCH) {
                flush();
            }
        }
        double squares = residualSquares;
        double largest = maxAbs;
        int beyond = outliers;
        double limit = Conditioning.OUTLIER_SIGMAS * sigma;
        for (int i = from; i < from + count; i++) {
            double residual = residuals[i];
            squares += residual * residual;
            double abs = Math.abs(residual);
            largest = Math.max(largest, abs);
            if (abs > limit) {
                beyond++;
            }
        }
        residualSquares = squares;
        maxAbs = largest;
        outliers = beyond;
        this.count += count;
        whiteness.addAll(residuals, from, count);
    }

    /**
     * Merges the batched values: their own mean and spread by two passes over the batch, then the
     * pairwise update below (the batched form of the updating algorithms of Chan, Golub &amp;
     * LeVeque 1979) — one division a batch instead of one a value as in Welford's update. Both
     * passes are {@link Matrices#dot} (four partial sums, four chains of adds instead of one): the
     * sum as the dot with ones (exact products), the spread as the centred batch's dot with itself.
     */
    private void flush() {
        if (batched == 0) {
            return;
        }
        double mean = Matrices.dot(pending, 0, ONES, 0, batched) / batched;
        for (int i = 0; i < batched; i++) {
            pending[i] -= mean;
        }
        mergeMoments(batched, mean, Matrices.dot(pending, 0, pending, 0, batched));
        batched = 0;
    }

    /** Pairwise update of the running mean and spread with another stretch's (see {@link #append}). */
    private void mergeMoments(long otherCount, double otherMean, double otherSpread) {
        long total = merged + otherCount;
        if (otherCount > 0) {
            double delta = otherMean - meanY;
            meanY += delta * ((double) otherCount / total);
            spreadY += otherSpread + delta * delta * ((double) merged * otherCount / total);
        }
        merged = total;
    }

    /**
     * Joins the statistics of the stretch that {@code later} streamed, which follows this one in the
     * trace. Counts, sums and outliers add and the maximum is the larger; mean and spread of y combine
     * by the pairwise update of Chan, Golub &amp; LeVeque ("Updating formulae and a pairwise algorithm
     * for computing sample variances", Stanford report STAN-CS-79-773, 1979; from memory):
     * with δ = ȳ_B − ȳ_A, ȳ = ȳ_A + δ·n_B/n and M2 = M2_A + M2_B + δ²·n_A·n_B/n. It is exact (no
     * rounding) when either side is empty.
     */
    void append(ChannelAccumulator later) {
        flush();
        later.flush();
        mergeMoments(later.merged, later.meanY, later.spreadY);
        count += later.count;
        residualSquares += later.residualSquares;
        maxAbs = Math.max(maxAbs, later.maxAbs);
        outliers += later.outliers;
        whiteness.append(later.whiteness);
    }

    /** Σ r² over the present samples streamed so far. */
    double residualSquares() {
        return residualSquares;
    }

    private static double[] ones(int length) {
        double[] out = new double[length];
        Arrays.fill(out, 1.0);
        return out;
    }

    ChannelDiagnostics finish(ChannelDiagnostics.SigmaSource source) {
        flush();
        double rms = count == 0 ? Double.NaN : Math.sqrt(residualSquares / count);
        double rSquared = spreadY > 0.0 ? 1.0 - residualSquares / spreadY : Double.NaN;
        return new ChannelDiagnostics((int) count, sigma, source, rms, count == 0 ? Double.NaN : maxAbs, rSquared,
                whiteness.statistic(), whiteness.lags(), whiteness.pValue(), outliers);
    }
}
