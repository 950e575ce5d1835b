package backstate.estimation;

/**
 * Streams one channel's measured values and residuals into the statistics of {@link ChannelDiagnostics}.
 * Accumulators of consecutive stretches of a trace can be joined ({@link #append}), so that the
 * stretches can be streamed in parallel.
 */
final class ChannelAccumulator {
    private final double sigma;
    private final LjungBox whiteness;
    private long count;
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

    /** Adds one present sample: measured y and residual y − ŷ (Welford 1962 running mean and spread for R²). */
    void add(double y, double residual) {
        count++;
        double delta = y - meanY;
        meanY += delta / count;
        spreadY += delta * (y - meanY);
        residualSquares += residual * residual;
        double abs = Math.abs(residual);
        maxAbs = Math.max(maxAbs, abs);
        if (abs > Conditioning.OUTLIER_SIGMAS * sigma) {
            outliers++;
        }
        whiteness.add(residual);
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
        long total = count + later.count;
        if (later.count > 0) {
            double delta = later.meanY - meanY;
            meanY += delta * ((double) later.count / total);
            spreadY += later.spreadY + delta * delta * ((double) count * later.count / total);
        }
        count = total;
        residualSquares += later.residualSquares;
        maxAbs = Math.max(maxAbs, later.maxAbs);
        outliers += later.outliers;
        whiteness.append(later.whiteness);
    }

    ChannelDiagnostics finish(ChannelDiagnostics.SigmaSource source) {
        double rms = count == 0 ? Double.NaN : Math.sqrt(residualSquares / count);
        double rSquared = spreadY > 0.0 ? 1.0 - residualSquares / spreadY : Double.NaN;
        return new ChannelDiagnostics((int) count, sigma, source, rms, count == 0 ? Double.NaN : maxAbs, rSquared,
                whiteness.statistic(), whiteness.lags(), whiteness.pValue(), outliers);
    }
}
