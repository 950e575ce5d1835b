package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.Random;
import org.junit.jupiter.api.Test;

/**
 * Two chunks joined by the change of unknowns must give the same least-squares problem as one
 * pass: the same solution, residual, equation and sample counts. The reference is our own
 * single-pass route, itself checked against numpy in InitialStateEstimatorReferenceTest; here
 * the check is that the join is exact, so the tolerance is rounding (1e-10 relative).
 */
class ChunkedEquationsTest {
    static final int SAMPLES = ChunkedEquations.PARALLEL_FROM_SAMPLES + 20_001;
    static final double TOLERANCE = 1e-10;

    static final double[][] A = {{-0.02, 0.01, 0.0}, {0.005, -0.03, 0.02}, {0.0, 0.01, -0.015}};
    static final double[][] B = {{0.01, 0.0}, {0.0, 0.02}, {0.0, 0.0}};
    static final double[][] C = {{1.0, 0.0, 0.0}, {0.0, 1.0, 1.0}};
    static final double[][] D = {{0.0, 0.1}, {0.0, 0.0}};

    @Test
    void uniform_trace_with_inputs_and_offsets_joins_exactly() {
        StateSpaceModel model = StateSpaceModel.continuous(A, B, C, D, new double[] {0.1, 0.2});
        assertSameProblem(model, trace(false, false), EstimationOptions.defaults().withOffsets(true));
    }

    @Test
    void nonuniform_trace_with_missing_values_and_continuous_weights_joins_exactly() {
        StateSpaceModel model = StateSpaceModel.continuous(A, B, C, D, null);
        assertSameProblem(model, trace(true, true), EstimationOptions.defaults().withFormulation(Formulation.CONTINUOUS));
    }

    @Test
    void discrete_trace_with_gaps_joins_exactly() {
        double[][] a = {{0.9, 0.05, 0.0}, {0.0, 0.95, 0.02}, {0.0, 0.0, 0.99}};
        StateSpaceModel model = StateSpaceModel.discrete(a, B, C, D, 1.0, null);
        assertSameProblem(model, trace(true, false), EstimationOptions.defaults());
    }

    private static void assertSameProblem(StateSpaceModel model, Trace trace, EstimationOptions options) {
        SolveContext ctx = new SolveContext(model, trace, options);
        EquationPass.Result single = EquationPass.run(ctx);
        EquationPass.Result joined = ChunkedEquations.run(new SolveContext(model, trace, options));
        int q = ctx.q;
        double[] x1 = Triangular.solveUpper(single.information().factorR(), single.information().rhs(), q);
        double[] x2 = Triangular.solveUpper(joined.information().factorR(), joined.information().rhs(), q);
        for (int i = 0; i < q; i++) {
            assertEquals(x1[i], x2[i], TOLERANCE * Math.max(1.0, Math.abs(x1[i])), "θ[" + i + "]");
        }
        assertEquals(single.information().equations(), joined.information().equations());
        assertEquals(single.information().residualSquares(), joined.information().residualSquares(),
                TOLERANCE * single.information().residualSquares());
        assertArrayEquals(single.presentCounts(), joined.presentCounts());
    }

    /** Seeded synthetic data from a known state; steps 1 s, or 1–3 s at random; ~2 % of outputs missing. */
    private static Trace trace(boolean irregular, boolean fractionalSteps) {
        Random random = new Random(20261201L);
        double[] t = new double[SAMPLES];
        double[] y = new double[SAMPLES * 2];
        double[] u = new double[SAMPLES * 2];
        for (int k = 0; k < SAMPLES; k++) {
            double step = irregular ? 1 + random.nextInt(3) + (fractionalSteps ? 0.25 * random.nextInt(4) : 0.0) : 1.0;
            t[k] = k == 0 ? 0.0 : t[k - 1] + step;
            u[2 * k] = Math.sin(k * 1e-3);
            u[2 * k + 1] = 20.0 + random.nextGaussian();
            for (int j = 0; j < 2; j++) {
                boolean missing = irregular && random.nextDouble() < 0.02;
                y[2 * k + j] = missing ? Double.NaN : 5.0 * Math.cos(1e-4 * k + j) + 0.1 * random.nextGaussian();
            }
        }
        return new Trace(t, y, u, 2, 2, null);
    }
}
