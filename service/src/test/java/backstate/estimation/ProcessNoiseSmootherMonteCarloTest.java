package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Random;
import org.junit.jupiter.api.Test;

/**
 * Draws from the stochastic model itself (x0 fixed, process noise through the exact interval
 * covariance, Gaussian sample noise) and checks the reported uncertainty against the spread of the
 * estimates. With no prior, x̂0 is the generalised least-squares estimate of x0 under the noise the
 * model declares, so its covariance is exactly the reported one and the normal 95 % intervals cover
 * 95 % (Gauss–Markov/Aitken; e.g. Kariya &amp; Kurata 2004, Generalized Least Squares, ch. 2 — from
 * memory). 2 000 draws: the empirical standard deviation is within ±10 % of the reported standard
 * error (its own sampling error is 1/√(2·2000) = 1.6 %), coverage within 95 ± 2 % (binomial
 * σ = 0.49 %), and the pooled normalised innovations have mean 0 ± 0.02 and variance 1 ± 0.03
 * (sampling σ ≈ 0.003 and 0.004 over about 1.1·10⁵ values).
 */
class ProcessNoiseSmootherMonteCarloTest {
    static final int DRAWS = 2000;
    static final int SAMPLES = 60;
    static final double STEP = 0.1;
    static final double SIGMA = 0.05;
    static final long SEED = 20261202L;
    static final double[] TRUE_X0 = {1.0, -0.5};

    @Test
    void reported_standard_errors_and_intervals_match_the_spread_of_estimates() {
        double[][] a = {{0, 1}, {-4, -0.4}};
        double[][] qc = {{0.01, 0.0}, {0.0, 0.2}};
        StateSpaceModel model = StateSpaceModel.continuous(a, null, new double[][] {{1, 0}}, null, null)
                .withProcessNoise(qc);
        int n = 2;
        double[] phi = ZeroOrderHold.discretize(Matrices.flatten(a, n, n), null, n, 0, STEP).transition();
        ProcessNoiseCovariance.Factor g = ProcessNoiseCovariance.factor(
                ProcessNoiseCovariance.continuous(Matrices.flatten(a, n, n), Matrices.flatten(qc, n, n), n, STEP), n);
        Random random = new Random(SEED);
        double[] sumSquares = new double[n];
        int[] covered = new int[n];
        double[] endSquares = new double[n];
        int[] endCovered = new int[n];
        double[] endSe = null;
        double[] se = null;
        double innovationSum = 0.0;
        double innovationSquares = 0.0;
        long innovations = 0;
        EstimationOptions options = EstimationOptions.defaults().withFormulation(Formulation.PROCESS_NOISE)
                .withKeepSeries(false);
        for (int draw = 0; draw < DRAWS; draw++) {
            double[] lastState = new double[n];
            Estimate e = assertInstanceOf(Estimate.class,
                    InitialStateEstimator.solve(model, simulate(phi, g, random, lastState), options));
            se = e.standardErrors();
            Estimate.StateAt end = e.windowEnd();
            endSe = end.standardErrors();
            for (int i = 0; i < n; i++) {
                double error = end.state()[i] - lastState[i];
                endSquares[i] += error * error;
                if (end.lower()[i] <= lastState[i] && lastState[i] <= end.upper()[i]) {
                    endCovered[i]++;
                }
            }
            for (int i = 0; i < n; i++) {
                double error = e.solution()[i] - TRUE_X0[i];
                sumSquares[i] += error * error;
                if (e.intervalLower()[i] <= TRUE_X0[i] && TRUE_X0[i] <= e.intervalUpper()[i]) {
                    covered[i]++;
                }
            }
            InnovationStatistics s = e.innovations().get(0);
            innovationSum += s.mean() * s.samples();
            innovationSquares += s.variance() * (s.samples() - 1) + s.mean() * s.mean() * s.samples();
            innovations += s.samples();
        }
        for (int i = 0; i < n; i++) {
            double spread = Math.sqrt(sumSquares[i] / DRAWS);
            double endSpread = Math.sqrt(endSquares[i] / DRAWS);
            System.out.printf(java.util.Locale.ROOT, "process noise, %d draws, state %d: x0 spread/se %.3f, coverage %.4f;"
                    + " window end spread/se %.3f, coverage %.4f%n", DRAWS, i, spread / se[i], covered[i] / (double) DRAWS,
                    endSpread / endSe[i], endCovered[i] / (double) DRAWS);
            assertEquals(1.0, spread / se[i], 0.10, "x0[" + i + "] empirical sd " + spread + " against se " + se[i]);
            assertEquals(0.95, covered[i] / (double) DRAWS, 0.02, "x0[" + i + "] coverage");
            assertEquals(1.0, endSpread / endSe[i], 0.10, "window end[" + i + "] empirical sd " + endSpread
                    + " against se " + endSe[i]);
            assertEquals(0.95, endCovered[i] / (double) DRAWS, 0.02, "window end[" + i + "] coverage");
        }
        assertEquals(0.0, innovationSum / innovations, 0.02, "innovation mean");
        assertEquals(1.0, innovationSquares / innovations, 0.03, "innovation variance");
        assertTrue(innovations > (long) DRAWS * (SAMPLES - 3), "innovations counted: " + innovations);
    }

    /** One draw of the stochastic model; {@code lastState} receives the true state at the last sample. */
    private static Trace simulate(double[] phi, ProcessNoiseCovariance.Factor g, Random random, double[] lastState) {
        int n = 2;
        int r = g.rank();
        double[] x = TRUE_X0.clone();
        double[] t = new double[SAMPLES];
        double[] y = new double[SAMPLES];
        double[] next = new double[n];
        for (int k = 0; k < SAMPLES; k++) {
            t[k] = STEP * k;
            y[k] = x[0] + SIGMA * random.nextGaussian();
            if (k == SAMPLES - 1) {
                System.arraycopy(x, 0, lastState, 0, n);
            }
            double[] xi = new double[r];
            for (int c = 0; c < r; c++) {
                xi[c] = random.nextGaussian();
            }
            for (int i = 0; i < n; i++) {
                double v = phi[i * n] * x[0] + phi[i * n + 1] * x[1];
                for (int c = 0; c < r; c++) {
                    v += g.g()[i * r + c] * xi[c];
                }
                next[i] = v;
            }
            System.arraycopy(next, 0, x, 0, n);
        }
        return new Trace(t, y, null, 1, 0, new double[] {SIGMA});
    }
}
