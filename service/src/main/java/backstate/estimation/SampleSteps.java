package backstate.estimation;

import backstate.text.Figure;

/**
 * Converts sample times into integer steps between consecutive samples, so that transition
 * matrices can be cached by step length.
 *
 * <p>Continuous models count in ticks of {@link #TICK_SECONDS}; discrete models count in sample
 * periods and require every time to sit on the model's grid. Steps are differences of rounded
 * offsets from t0, so rounding never accumulates along the trace.
 */
final class SampleSteps {
    /** Time resolution for continuous models: 1 µs. Rounding to it shifts a sample by at most 0.5 µs, far below any sensor's timing accuracy: common practice, no source. */
    static final double TICK_SECONDS = 1e-6;
    /** A discrete-model time may sit off its grid point by this fraction of a period (float noise in the posted times). */
    static final double GRID_TOLERANCE = 1e-6;
    /**
     * ... or by half a tick: times are kept to the microsecond, so a grid point between two ticks
     * is posted rounded to the nearer one (a 0.01 s grid at an epoch of 1.8e9 s, where a double
     * itself only resolves 0.24 µs, is still a grid).
     */
    static final double HALF_TICK_MICROS = 0.5 + 1e-6;

    private final double t0;
    private final double unitSeconds;
    private final boolean discrete;

    SampleSteps(StateSpaceModel model, double t0) {
        this.t0 = t0;
        this.discrete = model.isDiscrete();
        this.unitSeconds = discrete ? model.samplePeriod() : TICK_SECONDS;
    }

    /** Seconds per step unit (tick or period). */
    double unitSeconds() {
        return unitSeconds;
    }

    /** Offset of time t from t0 in whole units; for a discrete model, rejects a time off the grid. */
    long unitsFromStart(double t, String field) {
        return units(t, field);
    }

    /** As {@link #unitsFromStart(double, String)} for sample k, naming {@code time[k]} only when it throws. */
    long unitsOfSample(int k, double t) {
        return discrete ? units(t, "time[" + k + "]") : Math.round((t - t0) / unitSeconds);
    }

    private long units(double t, String field) {
        if (!discrete) {
            return Math.round((t - t0) / unitSeconds);
        }
        // Times sit on the microsecond grid, so the offset in whole microseconds is exact, whatever the epoch.
        double offsetMicros = Math.rint((t - t0) / TICK_SECONDS);
        double periodMicros = unitSeconds / TICK_SECONDS;
        long rounded = Math.round(offsetMicros / periodMicros);
        double off = Math.abs(offsetMicros - rounded * periodMicros);
        if (off > Math.max(HALF_TICK_MICROS, GRID_TOLERANCE * periodMicros)) {
            throw offGridError(field, t, offsetMicros / periodMicros);
        }
        return rounded;
    }

    private ModelException offGridError(String field, double t, double periods) {
        String plain = new java.math.BigDecimal(periods).round(new java.math.MathContext(9)).stripTrailingZeros().toPlainString();
        return ModelException.ofTime(field, t, "a whole number of sample periods (" + Figure.exact(unitSeconds)
                + " s) after the first sample; it is " + plain + " periods after it");
    }
}
