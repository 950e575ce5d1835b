package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import org.junit.jupiter.api.Test;

/**
 * Validation of a long trace walks its times in two halves ({@link StepScan}); the answers must be
 * a single walk's: the one step of an even trace, UNEVEN when either half or the pair across the
 * join differs, and the first bad sample in trace order named in the error.
 */
class StepScanTest {
    static final int SAMPLES = ChunkedEquations.PARALLEL_FROM_SAMPLES + 1_001;
    static final int MIDDLE = SAMPLES / 2;
    static final StateSpaceModel CONTINUOUS = EvenStepTest.CONTINUOUS;

    @Test
    void an_even_long_trace_has_one_step_of_a_thousand_ticks() {
        // 1 ms / 1 µs per tick (closed form).
        assertEquals(1000L, step(times(1e-3)));
    }

    @Test
    void halves_with_different_steps_make_the_trace_uneven() {
        double[] times = times(1e-3);
        for (int k = MIDDLE; k < SAMPLES; k++) {
            times[k] = times[MIDDLE - 1] + (k - MIDDLE + 1) * 2e-3;
        }
        assertEquals(SolveContext.UNEVEN, step(times));
    }

    @Test
    void one_longer_step_across_the_join_makes_the_trace_uneven() {
        double[] times = times(1e-3);
        for (int k = MIDDLE; k < SAMPLES; k++) {
            times[k] += 1e-3;
        }
        assertEquals(SolveContext.UNEVEN, step(times));
    }

    @Test
    void the_first_repeated_sample_in_trace_order_is_named() {
        double[] times = times(1e-3);
        times[MIDDLE + 10] = times[MIDDLE + 9] + 1e-7;
        times[40] = times[39] + 1e-7;   // 0.1 µs on: the same 1 µs tick
        ModelException e = assertThrows(ModelException.class, () -> step(times));
        assertEquals("time[40]", e.field());
    }

    @Test
    void a_sample_repeated_across_the_join_is_named() {
        double[] times = times(1e-3);
        times[MIDDLE] = times[MIDDLE - 1] + 1e-7;
        ModelException e = assertThrows(ModelException.class, () -> step(times));
        assertEquals("time[" + MIDDLE + "]", e.field());
    }

    private static long step(double[] times) {
        return InitialStateEstimator.validatedStep(CONTINUOUS, new Trace(times, new double[SAMPLES], null, 1, 0, null),
                EstimationOptions.defaults());
    }

    private static double[] times(double h) {
        double[] out = new double[SAMPLES];
        for (int k = 0; k < SAMPLES; k++) {
            out[k] = k * h;
        }
        return out;
    }
}
