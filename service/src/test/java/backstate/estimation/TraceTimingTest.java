package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import org.junit.jupiter.api.Test;

/** Sample times the step arithmetic cannot represent are refused up front, naming the sample. */
class TraceTimingTest {
    static final double[][] A = {{-1.0}};
    static final double[][] C = {{1.0}};

    @Test
    void continuous_samples_closer_than_a_microsecond_are_refused() {
        StateSpaceModel model = StateSpaceModel.continuous(A, null, C, null, null);
        Trace trace = new Trace(new double[] {0.0, 1.0, 1.0 + 2e-7}, new double[] {1, 1, 1}, null, 1, 0, null);
        ModelException e = assertThrows(ModelException.class,
                () -> InitialStateEstimator.solve(model, trace, EstimationOptions.defaults()));
        assertEquals("time[2]", e.field());
    }

    @Test
    void discrete_samples_off_the_grid_are_refused() {
        StateSpaceModel model = StateSpaceModel.discrete(new double[][] {{0.5}}, null, C, null, 0.1, null);
        Trace trace = new Trace(new double[] {0.0, 0.1, 0.25}, new double[] {1, 1, 1}, null, 1, 0, null);
        ModelException e = assertThrows(ModelException.class,
                () -> InitialStateEstimator.solve(model, trace, EstimationOptions.defaults()));
        assertEquals("time[2]", e.field());
    }

    @Test
    void discrete_samples_with_gaps_on_the_grid_are_solved_exactly() {
        // x[k] = 0.5^k x0 with x0 = 8 (closed form), sampled at steps 0, 1, 3: y = 8, 4, 1.
        StateSpaceModel model = StateSpaceModel.discrete(new double[][] {{0.5}}, null, C, null, 0.1, null);
        Trace trace = new Trace(new double[] {0.0, 0.1, 0.3}, new double[] {8, 4, 1}, null, 1, 0, null);
        Estimate e = (Estimate) InitialStateEstimator.solve(model, trace, EstimationOptions.defaults());
        assertEquals(8.0, e.solution()[0], 1e-13);
    }
}
