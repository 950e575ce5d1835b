package backstate.estimation;

/**
 * One output channel's normalised innovations ν = (y − ŷ⁻)/√(predicted variance), each sample's
 * misfit against the prediction from the other side of the window. Under the model they are
 * independent N(0, 1), so their mean should be near 0, their variance near 1, and the sequence
 * white (Ljung–Box, {@link LjungBox}). Samples before the information covers every unknown have no
 * finite predicted variance and are not counted.
 *
 * @param samples      innovations counted
 * @param mean         their mean (NaN when none)
 * @param variance     their variance about the mean, divided by samples − 1 (NaN below two)
 * @param ljungBoxQ    Ljung–Box statistic of the sequence
 * @param ljungBoxLags lags used
 * @param ljungBoxP    upper-tail p-value of Q
 */
public record InnovationStatistics(int samples, double mean, double variance, double ljungBoxQ, int ljungBoxLags,
                                   double ljungBoxP) {
}
