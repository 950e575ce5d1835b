package backstate.formats;

/**
 * Hard limits on what one request or file may hold; checked while streaming so an oversize body
 * is rejected before it is held in memory.
 *
 * @param maxSamples     samples per trace
 * @param maxNameLength  characters in a channel, state, family or unit name
 * @param maxJsonDepth   nesting depth of a JSON body
 */
public record Limits(int maxSamples, int maxNameLength, int maxJsonDepth) {
    public static final Limits DEFAULTS = new Limits(2_000_000, 64, 16);
    /**
     * Largest magnitude of a sample value (output or input) and of a model matrix entry. Refused at
     * the door rather than scaled: beyond 2^53 ≈ 9e15 a double no longer holds a reading's units
     * digit, so no sensor writes such a value, and with {@link #MIN_SIGMA} it keeps every weighted
     * residual (≤ 1e27) and its square summed over any trace far inside the double range.
     */
    public static final double MAX_MAGNITUDE = 1e15;
    /** Smallest noise σ: below it 1/σ² leaves the double range (σ = 1e-320 has no finite inverse square). */
    public static final double MIN_SIGMA = 1e-12;

    /** The value if its magnitude is at most {@link #MAX_MAGNITUDE}; else refused naming the field and the limit. */
    public static double requireMagnitude(String field, double value) {
        if (Math.abs(value) > MAX_MAGNITUDE) {
            throw new InputException(field, "got " + value + ", expected a magnitude of at most " + MAX_MAGNITUDE);
        }
        return value;
    }

    /** A noise σ in [{@link #MIN_SIGMA}, {@link #MAX_MAGNITUDE}]; else refused naming the field and the limits. */
    public static double requireSigma(String field, double sigma) {
        if (!(sigma >= MIN_SIGMA && sigma <= MAX_MAGNITUDE)) {
            throw new InputException(field, "got " + sigma + ", expected a σ from " + MIN_SIGMA + " to " + MAX_MAGNITUDE);
        }
        return sigma;
    }
}
