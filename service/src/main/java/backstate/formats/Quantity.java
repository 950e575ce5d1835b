package backstate.formats;

/** A named model quantity (state, output or input) with its unit and, for outputs, a default noise σ. */
public record Quantity(String name, String unit, Double noiseSigma) {
}
