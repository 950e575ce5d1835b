package backstate.regression;

/** The request body of POST /v1/regressions, as sent; {@code traces} and {@code tolerances} may be left out. */
public record RegressionRequest(String family, Integer baseline, Integer candidate, Selection traces,
                                Tolerances tolerances) {
}
