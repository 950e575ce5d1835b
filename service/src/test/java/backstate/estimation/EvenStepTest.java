package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

/**
 * Validation finds an evenly sampled trace's one step, and the solve's shortcut for it (sample k at
 * k·step units) gives every sample the same units as rounding its time offset would.
 */
class EvenStepTest {
    static final double[][] A = {{-1.0}};
    static final double[][] C = {{1.0}};
    static final StateSpaceModel CONTINUOUS = StateSpaceModel.continuous(A, null, C, null, null);

    @Test
    void samples_one_millisecond_apart_step_by_a_thousand_microsecond_ticks() {
        // 1e-3 s / 1e-6 s per tick = 1000 ticks (closed form).
        assertEquals(1000L, InitialStateEstimator.validatedStep(CONTINUOUS, trace(times(2000, 5.0, 1e-3)),
                EstimationOptions.defaults()));
    }

    @Test
    void one_longer_gap_makes_a_trace_uneven() {
        double[] times = times(50, 0.0, 1e-3);
        times[49] += 1e-3;
        assertEquals(SolveContext.UNEVEN,
                InitialStateEstimator.validatedStep(CONTINUOUS, trace(times), EstimationOptions.defaults()));
    }

    @Test
    void a_single_sample_has_no_step() {
        assertEquals(SolveContext.UNEVEN,
                InitialStateEstimator.validatedStep(CONTINUOUS, trace(new double[] {3.0}), EstimationOptions.defaults()));
    }

    @Test
    void the_shortcut_gives_every_sample_the_units_of_its_rounded_time_offset() {
        // Times t0 + k·h at t0 = 1.7e9 s (a Unix time) are off the exact grid by up to half their
        // 2.4e-7 s spacing, under half a 1 µs tick, so round((t_k − t0) / 1 µs) = k·1000 (SampleSteps).
        double[] times = times(100_000, 1.7e9, 1e-3);
        Trace trace = trace(times);
        EstimationOptions options = EstimationOptions.defaults();
        long step = InitialStateEstimator.validatedStep(CONTINUOUS, trace, options);
        assertEquals(1000L, step, "even to the tick");
        SolveContext even = new SolveContext(CONTINUOUS, trace, options, step);
        SolveContext rounded = new SolveContext(CONTINUOUS, trace, options);
        for (int k = 0; k < times.length; k++) {
            assertEquals(1000L * k, rounded.units(k), "sample " + k + ", rounded");
            assertEquals(rounded.units(k), even.units(k), "sample " + k);
        }
    }

    private static double[] times(int samples, double t0, double h) {
        double[] out = new double[samples];
        for (int k = 0; k < samples; k++) {
            out[k] = t0 + k * h;
        }
        return out;
    }

    private static Trace trace(double[] times) {
        return new Trace(times, new double[times.length], null, 1, 0, null);
    }
}
