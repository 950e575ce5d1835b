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
        long rounded = Math.round((t - t0) / unitSeconds);
        if (offGrid(t, rounded)) {
            throw offGridError(field, t);
        }
        return rounded;
    }

    /** As {@link #unitsFromStart(double, String)} for sample k, naming {@code time[k]} only when it throws. */
    long unitsOfSample(int k, double t) {
        long rounded = Math.round((t - t0) / unitSeconds);
        if (offGrid(t, rounded)) {
            throw offGridError("time[" + k + "]", t);
        }
        return rounded;
    }

    private boolean offGrid(double t, long rounded) {
        return discrete && Math.abs((t - t0) / unitSeconds - rounded) > GRID_TOLERANCE;
    }

    private ModelException offGridError(String field, double t) {
        return ModelException.ofTime(field, t, "a whole number of sample periods (" + Figure.exact(unitSeconds)
                + " s) after the first sample; it is " + Figure.of((t - t0) / unitSeconds) + " periods after it");
    }
}
