package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Random;
import org.junit.jupiter.api.Test;

/**
 * The lifted S-step form against the zero-order-hold recursion it folds, x_{k+1} = Φx_k + Γu_k,
 * y_k = Cx_k + Du_k (the definition of the discretised system; closed form, no outside library),
 * first for one lifted step, then through the solver: the fitted series and the reference-time
 * state of a trace whose uniform stretches are lifted equal a plain step-by-step simulation from
 * the returned x̂0.
 */
class LiftedStepTest {
    static final int N_STATES = 6;
    static final int P = 2;
    static final int M = 2;
    /** Sums of up to ~20 terms of size ≤ 10 reassociated: a few ulps of the scale. */
    static final double TOLERANCE = 1e-12;

    static StateSpaceModel model() {
        Random random = new Random(7);
        double[][] a = new double[N_STATES][N_STATES];
        for (int i = 0; i < N_STATES; i++) {
            for (int j = 0; j < N_STATES; j++) {
                a[i][j] = 0.3 * random.nextGaussian();
            }
            a[i][i] -= 1.0;
        }
        double[][] b = new double[N_STATES][M];
        for (double[] row : b) {
            for (int l = 0; l < M; l++) {
                row[l] = random.nextGaussian();
            }
        }
        double[][] c = new double[P][N_STATES];
        for (double[] row : c) {
            for (int i = 0; i < N_STATES; i++) {
                row[i] = random.nextGaussian();
            }
        }
        double[][] d = {{0.2, 0.0}, {-0.1, 0.3}};
        return StateSpaceModel.continuous(a, b, c, d, new double[] {0.05, 0.05});
    }

    @Test
    void one_lifted_step_equals_s_single_steps() {
        StateSpaceModel model = model();
        assertTrue(LiftedStep.pays(N_STATES, P, M), "the test model must be one where lifting is used");
        ZeroOrderHold.Step step = ZeroOrderHold.discretize(model.a(), model.b(), N_STATES, M, 0.1);
        LiftedStep lifted = new LiftedStep(step, model.c(), model.d(), N_STATES, P, M);
        Random random = new Random(11);
        double[] inputs = new double[(3 + LiftedStep.SAMPLES) * M];
        for (int i = 0; i < inputs.length; i++) {
            inputs[i] = random.nextGaussian();
        }
        double[] x = new double[N_STATES];
        for (int i = 0; i < N_STATES; i++) {
            x[i] = random.nextGaussian();
        }
        int k = 3;
        double[] expectedY = new double[LiftedStep.SAMPLES * P];
        double[] expectedX = x.clone();
        for (int i = 0; i < LiftedStep.SAMPLES; i++) {
            double[] u = java.util.Arrays.copyOfRange(inputs, (k + i) * M, (k + i + 1) * M);
            double[] y = add(Matrices.multiply(model.c(), expectedX, P, N_STATES, 1), Matrices.multiply(model.d(), u, P, M, 1));
            System.arraycopy(y, 0, expectedY, i * P, P);
            expectedX = add(Matrices.multiply(step.transition(), expectedX, N_STATES, N_STATES, 1),
                    Matrices.multiply(step.input(), u, N_STATES, M, 1));
        }
        double[] y = new double[LiftedStep.SAMPLES * P];
        lifted.advance(x, inputs, k, lifted.newWork(), y);
        assertClose(expectedY, y, "outputs of samples k … k+S−1");
        assertClose(expectedX, x, "state at k+S");
    }

    @Test
    void solver_series_and_reference_state_equal_a_step_by_step_simulation() {
        StateSpaceModel model = model();
        int samples = 1000;
        double h = 0.05;
        double[] times = new double[samples];
        for (int k = 1; k < samples; k++) {
            // a stretch of longer steps and one odd step break the uniform runs
            times[k] = times[k - 1] + (k >= 300 && k < 310 ? 0.07 : k == 611 ? 0.031 : h);
        }
        Random random = new Random(3);
        double[] inputs = new double[samples * M];
        for (int i = 0; i < inputs.length; i++) {
            inputs[i] = Math.sin(0.01 * i) + 0.3 * random.nextGaussian();
        }
        double[] truth = {1.0, -0.5, 0.25, 2.0, 0.0, -1.0};
        double[][] truthStates = simulate(model, times, inputs, truth);
        double[] outputs = new double[samples * P];
        for (int k = 0; k < samples; k++) {
            double[] y = outputOf(model, truthStates[k], inputs, k);
            for (int j = 0; j < P; j++) {
                outputs[k * P + j] = random.nextDouble() < 0.03 ? Double.NaN : y[j] + 0.05 * random.nextGaussian();
            }
        }
        double referenceTime = times[502] + 0.3 * h;
        Trace trace = new Trace(times, outputs, inputs, P, M, new double[] {0.05, 0.05});
        Estimate estimate = (Estimate) InitialStateEstimator.solve(model, trace,
                EstimationOptions.defaults().withKeepSeries(true).withReferenceTime(referenceTime));

        double[][] states = simulate(model, times, inputs, estimate.initialState(N_STATES));
        double[] fitted = new double[samples * P];
        for (int k = 0; k < samples; k++) {
            System.arraycopy(outputOf(model, states[k], inputs, k), 0, fitted, k * P, P);
        }
        assertClose(fitted, estimate.series().fitted(), "fitted series");
        ZeroOrderHold.Step tail = ZeroOrderHold.discretize(model.a(), model.b(), N_STATES, M, referenceTime - times[502]);
        double[] expectedReference = add(Matrices.multiply(tail.transition(), states[502], N_STATES, N_STATES, 1),
                Matrices.multiply(tail.input(), java.util.Arrays.copyOfRange(inputs, 502 * M, 503 * M), N_STATES, M, 1));
        assertClose(expectedReference, estimate.reference().state(), "state at the reference time");
    }

    /** x_k for every sample by the plain recursion, one discretisation per step. */
    private static double[][] simulate(StateSpaceModel model, double[] times, double[] inputs, double[] x0) {
        double[][] states = new double[times.length][];
        states[0] = x0.clone();
        for (int k = 1; k < times.length; k++) {
            ZeroOrderHold.Step step = ZeroOrderHold.discretize(model.a(), model.b(), N_STATES, M,
                    Math.round((times[k] - times[k - 1]) * 1e6) / 1e6);
            double[] u = java.util.Arrays.copyOfRange(inputs, (k - 1) * M, k * M);
            states[k] = add(Matrices.multiply(step.transition(), states[k - 1], N_STATES, N_STATES, 1),
                    Matrices.multiply(step.input(), u, N_STATES, M, 1));
        }
        return states;
    }

    private static double[] outputOf(StateSpaceModel model, double[] x, double[] inputs, int k) {
        double[] u = java.util.Arrays.copyOfRange(inputs, k * M, (k + 1) * M);
        return add(Matrices.multiply(model.c(), x, P, N_STATES, 1), Matrices.multiply(model.d(), u, P, M, 1));
    }

    private static double[] add(double[] a, double[] b) {
        double[] out = a.clone();
        for (int i = 0; i < out.length; i++) {
            out[i] += b[i];
        }
        return out;
    }

    private static void assertClose(double[] expected, double[] actual, String what) {
        assertEquals(expected.length, actual.length, what);
        double scale = 0.0;
        for (double v : expected) {
            scale = Math.max(scale, Math.abs(v));
        }
        for (int i = 0; i < expected.length; i++) {
            assertEquals(expected[i], actual[i], TOLERANCE * scale, what + " [" + i + "]");
        }
    }
}
