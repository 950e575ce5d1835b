package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Random;
import org.junit.jupiter.api.Test;

/**
 * Two chunks joined by the change of unknowns must give the same least-squares problem as one
 * pass: the same solution, residual (where the route splits it off), equation and sample counts. The reference is our own
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

    @Test
    void uniform_trace_with_continuous_weights_joins_exactly_on_the_block_route() {
        StateSpaceModel model = StateSpaceModel.continuous(A, B, C, D, new double[] {0.1, 0.2});
        assertSameProblem(model, trace(false, false), EstimationOptions.defaults().withFormulation(Formulation.CONTINUOUS));
    }

    private static void assertSameProblem(StateSpaceModel model, Trace trace, EstimationOptions options) {
        SolveContext ctx = new SolveContext(model, trace, options);
        EquationPass.Result single = EquationPass.run(ctx);
        EquationPass.Result joined = ChunkedEquations.run(new SolveContext(model, trace, options));
        int q = ctx.q;
        assertSameFactor(single.factors().estimate, joined.factors().estimate, q, "estimate");
        if (single.factors().weighted()) {
            assertSameFactor(single.factors().perSample, joined.factors().perSample, q, "per-sample fit");
            assertSameGram(single.factors().spread, joined.factors().spread, q);
        }
        assertArrayEquals(single.presentCounts(), joined.presentCounts());
    }

    private static void assertSameFactor(SquareRootInformation one, SquareRootInformation two, int q, String what) {
        double[] x1 = Triangular.solveUpper(one.factorR(), one.rhs(), q);
        double[] x2 = Triangular.solveUpper(two.factorR(), two.rhs(), q);
        for (int i = 0; i < q; i++) {
            assertEquals(x1[i], x2[i], TOLERANCE * Math.max(1.0, Math.abs(x1[i])), what + " θ[" + i + "]");
        }
        assertEquals(one.equations(), two.equations(), what + " equations");
        if (Double.isNaN(one.residualSquares())) {
            // Projected blocks (sampled formulation) split off no residual; χ² comes from the
            // residual pass (BlockProjectionTest compares it with the splitting route's).
            assertTrue(Double.isNaN(two.residualSquares()), what + " residual squares not tracked in either");
            return;
        }
        assertEquals(one.residualSquares(), two.residualSquares(), TOLERANCE * one.residualSquares(),
                what + " residual squares");
    }

    /** Factors are unique up to row signs, so the spread factors are compared as Gram matrices SᵀS. */
    private static void assertSameGram(SquareRootInformation one, SquareRootInformation two, int q) {
        double[] g1 = Matrices.multiply(Matrices.transpose(one.factorR(), q, q), one.factorR(), q, q, q);
        double[] g2 = Matrices.multiply(Matrices.transpose(two.factorR(), q, q), two.factorR(), q, q, q);
        double scale = 0.0;
        for (double v : g1) {
            scale = Math.max(scale, Math.abs(v));
        }
        for (int i = 0; i < q * q; i++) {
            assertEquals(g1[i], g2[i], TOLERANCE * scale, "spread SᵀS[" + i / q + "][" + i % q + "]");
        }
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
