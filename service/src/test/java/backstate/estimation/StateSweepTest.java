package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.util.Arrays;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** The blocked state sweep reaches the states of the step-by-step recurrence x_k = Φ x_{k−1} + Γ u_{k−1}. */
class StateSweepTest {
    /**
     * Both routes use the same Φ(h), Γ(h); the blocked one reassociates the sums (a 128-term dot
     * product, Φ^64 by six squarings) on stable models, so they agree to a few hundred ε at most.
     */
    private static final double RELATIVE = 1e-13;
    /** Inside the first uniform stretch, after the 37 ms gap, in the jitter, on chunk boundaries, the last sample. */
    private static final int[] TARGETS = {0, 1, 64, 200, 1500, 1501, 2000, 2000, 2600, 3000, 3100, 4000, 5999};

    @ParameterizedTest(name = "{0} model")
    @ValueSource(strings = {"continuous", "discrete"})
    void blocked_sweep_reaches_the_step_by_step_states(String kind) {
        StateSpaceModel model = "discrete".equals(kind) ? ChunkTraces.discrete() : ChunkTraces.continuous();
        SolveContext ctx = new SolveContext(model, ChunkTraces.trace(model, 3L), EstimationOptions.defaults());
        double[] x0 = Arrays.copyOf(ChunkTraces.truth(model), model.states());

        double[][] swept = StateSweep.statesAt(ctx, new TransitionCache(model, ctx.steps), x0, TARGETS);

        double[] x = x0.clone();
        double[] scratch = ctx.stepScratch();
        int next = 0;
        for (int k = 0; k < ctx.trace.samples() && next < TARGETS.length; k++) {
            if (k > 0) {
                ctx.propagate(x, k, ctx.transitions.over(ctx.units(k) - ctx.units(k - 1)), scratch);
            }
            while (next < TARGETS.length && TARGETS[next] == k) {
                EstimateCases.assertCloseNormwise(x, swept[next], RELATIVE, kind + ": state at sample " + k);
                next++;
            }
        }
        assertEquals(TARGETS.length, next);
    }

    @Test
    void a_model_without_inputs_sweeps_its_free_response() {
        StateSpaceModel model = StateSpaceModel.continuous(new double[][] {{-0.5, 1.0}, {-1.0, -0.5}}, null,
                new double[][] {{1.0, 0.0}}, null, null);
        double[] times = new double[300];
        for (int k = 0; k < times.length; k++) {
            times[k] = k * 0.01;
        }
        Trace trace = new Trace(times, new double[300], null, 1, 0, null);
        SolveContext ctx = new SolveContext(model, trace, EstimationOptions.defaults());

        double[] x = StateSweep.statesAt(ctx, ctx.transitions, new double[] {1.0, 0.0}, new int[] {299})[0];

        // x(t) = e^{−t/2} (cos t, −sin t) for x0 = (1, 0), at t = 2.99 s (closed form).
        double t = 2.99;
        double[] expected = {Math.exp(-t / 2) * Math.cos(t), -Math.exp(-t / 2) * Math.sin(t)};
        EstimateCases.assertCloseNormwise(expected, x, RELATIVE, "free response");
    }

    @Test
    void samples_out_of_order_are_refused() {
        StateSpaceModel model = ChunkTraces.continuous();
        SolveContext ctx = new SolveContext(model, ChunkTraces.trace(model, 3L), EstimationOptions.defaults());
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> StateSweep.statesAt(ctx, ctx.transitions, new double[4], new int[] {10, 5}));
        assertEquals("samples[1]: got 5, expected ascending indices in [0, 6000)", e.getMessage());
    }
}
