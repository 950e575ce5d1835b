package backstate.estimation;

/**
 * Options of one solve.
 *
 * @param formulation     sampled (default) or continuous weighting
 * @param prior           Gaussian prior on x0, or null
 * @param estimateOffsets also estimate one constant sensor offset per output channel
 * @param referenceTime   also report the state at this time inside the window, or null
 * @param keepSeries      return the series: measured and fitted outputs, residuals, and the state
 *                        trajectory with its standard errors and 95 % band, at the
 *                        samples {@link KeptSamples} keeps for {@code seriesStride}
 * @param mismatchLevel   significance level of the χ² and whiteness tests behind the mismatch flag
 * @param seriesStride    keep samples 0, s, 2s, … and the last in the series (s ≥ 1), so a plot of a
 *                        long trace never holds N points yet reaches the window's end
 */
public record EstimationOptions(Formulation formulation, Prior prior, boolean estimateOffsets,
                                Double referenceTime, boolean keepSeries, double mismatchLevel, int seriesStride) {
    public EstimationOptions {
        if (seriesStride < 1) {
            throw new IllegalArgumentException("seriesStride: got " + seriesStride + ", expected 1 or more");
        }
    }

    /** Default test level for the model-mismatch flag: 0.1 %, strict enough that a long good trace rarely trips it. */
    public static final double DEFAULT_MISMATCH_LEVEL = 1e-3;

    public static EstimationOptions defaults() {
        return new EstimationOptions(Formulation.SAMPLED, null, false, null, true, DEFAULT_MISMATCH_LEVEL, 1);
    }

    public EstimationOptions withPrior(Prior p) {
        return new EstimationOptions(formulation, p, estimateOffsets, referenceTime, keepSeries, mismatchLevel, seriesStride);
    }

    public EstimationOptions withFormulation(Formulation f) {
        return new EstimationOptions(f, prior, estimateOffsets, referenceTime, keepSeries, mismatchLevel, seriesStride);
    }

    public EstimationOptions withOffsets(boolean on) {
        return new EstimationOptions(formulation, prior, on, referenceTime, keepSeries, mismatchLevel, seriesStride);
    }

    public EstimationOptions withReferenceTime(Double t) {
        return new EstimationOptions(formulation, prior, estimateOffsets, t, keepSeries, mismatchLevel, seriesStride);
    }

    public EstimationOptions withKeepSeries(boolean on) {
        return new EstimationOptions(formulation, prior, estimateOffsets, referenceTime, on, mismatchLevel, seriesStride);
    }

    public EstimationOptions withSeriesStride(int stride) {
        return new EstimationOptions(formulation, prior, estimateOffsets, referenceTime, keepSeries, mismatchLevel, stride);
    }
}
