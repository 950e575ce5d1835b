package backstate.estimation;

/** Streams one channel's measured values and residuals into the statistics of {@link ChannelDiagnostics}. */
final class ChannelAccumulator {
    private final double sigma;
    private final LjungBox whiteness;
    private long count;
    private double meanY;
    private double spreadY;
    private double residualSquares;
    private double maxAbs;
    private int outliers;

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

    ChannelDiagnostics finish(ChannelDiagnostics.SigmaSource source) {
        double rms = count == 0 ? Double.NaN : Math.sqrt(residualSquares / count);
        double rSquared = spreadY > 0.0 ? 1.0 - residualSquares / spreadY : Double.NaN;
        return new ChannelDiagnostics((int) count, sigma, source, rms, count == 0 ? Double.NaN : maxAbs, rSquared,
                whiteness.statistic(), whiteness.lags(), whiteness.pValue(), outliers);
    }
}
