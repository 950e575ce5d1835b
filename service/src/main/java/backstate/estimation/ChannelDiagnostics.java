package backstate.estimation;

/**
 * Residual diagnostics of one output channel.
 *
 * @param samples        present (non-missing) samples
 * @param sigma          noise σ used to weight the channel
 * @param sigmaSource    where σ came from
 * @param rms            root mean square residual
 * @param maxAbs         largest absolute residual
 * @param rSquared       1 − SS_res/SS_tot about the channel mean (NaN when the channel is constant)
 * @param ljungBoxQ      Ljung–Box statistic of the residual sequence
 * @param ljungBoxLags   lags used (its χ² degrees of freedom)
 * @param ljungBoxP      upper-tail p-value of Q
 * @param outliers       residuals beyond {@link Conditioning#OUTLIER_SIGMAS} σ
 */
public record ChannelDiagnostics(int samples, double sigma, SigmaSource sigmaSource, double rms, double maxAbs,
                                 double rSquared, double ljungBoxQ, int ljungBoxLags, double ljungBoxP,
                                 int outliers) {
    /** Where a channel's noise σ came from. */
    public enum SigmaSource { TRACE, MODEL, ASSUMED_ONE }
}
