package backstate.estimation;

/** How samples are weighted in the least-squares cost. */
public enum Formulation {
    /** Each present sample is one equation weighted by 1/σ²: right for independent sample noise. */
    SAMPLED,
    /**
     * The L2 norm over the window, approximated by trapezoid weights on the samples in units of
     * the mean sample spacing ({@link TrapezoidWeights}). The noise is still independent per
     * sample: the covariance is the sandwich form and χ² the per-sample fit's ({@link WeightedFactors}).
     */
    CONTINUOUS,
    /**
     * The model is disturbed between samples by the process noise it declares: x̂0 and the state
     * trajectory are the maximum a posteriori estimates given the whole window, from a fixed-interval
     * smoother in square-root information form ({@link ProcessNoiseSmoother}). With zero process
     * noise it is the sampled estimate.
     */
    PROCESS_NOISE
}
