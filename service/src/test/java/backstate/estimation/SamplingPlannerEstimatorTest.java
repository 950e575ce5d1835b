package backstate.estimation;

import static backstate.estimation.EstimateCases.assertCloseNormwise;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.util.Arrays;
import java.util.List;
import java.util.Random;
import org.junit.jupiter.api.Test;

/**
 * The planner's prediction is the covariance the estimator reports on a trace of the same plan:
 * that covariance depends on the sample times, the measured outputs and σ, never on the data,
 * so a trace with arbitrary outputs and inputs must give it to rounding. And the estimator's
 * actual scatter over noisy traces (fixed seed) reproduces it within sampling error.
 *
 * <p>Model: the demo's reefer-40 v1 (test-data/demo/models/reefer-40.v1.json), 4 states, 2
 * outputs, 2 inputs, σ = 0.15 from the model unless the trace gives others.
 */
class SamplingPlannerEstimatorTest {
    /**
     * Same rows in the same order through the same Householder sweeps; only where pending rows are
     * flushed differs (the planner reads R off at each horizon), which moves R by rounding. With
     * κ(W) ≤ 6e6 here, κ(W)·eps ≈ 1e-9 bounds the effect; observed ≤ 6e-15.
     */
    static final double SAME_PLAN_TOLERANCE = 1e-10;
    static final long SEED = 20250302L;
    static final int DRAWS = 2000;
    /**
     * A 4-standard-deviation band (two-sided tail 6.3e-5 per check under the normal approximation;
     * common practice, no source): sample variance of K draws has relative std √(2/(K−1)) = 0.0316,
     * so the band is ±12.7 % on each variance; sample mean ±4·se/√K.
     */
    static final double BAND = 4.0;
    static final double PERIOD = 60.0;
    static final double T0 = 43200.0;

    @Test
    void predicted_covariance_is_the_estimators_on_a_trace_of_the_same_plan() throws IOException {
        StateSpaceModel model = reefer();
        double[] horizons = {1800, 7200, 21600};
        int[][] subsets = {{0}, {1}, {0, 1}};
        for (double[] sigma : List.of(new double[] {0.15, 0.15}, new double[] {0.1, 0.3})) {
            List<SamplingPlanner.SubsetPlan> plans = SamplingPlanner.plan(model,
                    new SamplingPlanner.Plan(PERIOD, horizons, subsets, sigma, null));
            Random random = new Random(SEED);
            for (int s = 0; s < subsets.length; s++) {
                for (SamplingPlanner.Prediction p : plans.get(s).predictions()) {
                    Trace trace = arbitraryTrace((int) p.samples(), subsets[s], sigma, random);
                    Estimate e = solve(model, trace);
                    String label = "outputs " + Arrays.toString(subsets[s]) + " σ " + Arrays.toString(sigma)
                            + " horizon " + p.horizon();
                    assertCloseNormwise(e.covariance(), p.covariance(), SAME_PLAN_TOLERANCE, label);
                    for (int i = 0; i < 4; i++) {
                        assertEquals(e.standardErrors()[i], p.standardErrors()[i],
                                SAME_PLAN_TOLERANCE * e.standardErrors()[i], label + " se[" + i + "]");
                    }
                    assertEquals(e.conditioning().conditionNumber(), p.conditionNumber(),
                            SAME_PLAN_TOLERANCE * p.conditionNumber(), label + " κ");
                }
            }
        }
    }

    @Test
    void estimator_scatter_over_noisy_traces_reproduces_the_predicted_standard_errors() throws IOException {
        StateSpaceModel model = reefer();
        double sigma = 0.15;
        int[] both = {0, 1};
        SamplingPlanner.Prediction p = SamplingPlanner.plan(model, new SamplingPlanner.Plan(PERIOD,
                new double[] {7200}, new int[][] {both}, new double[] {sigma, sigma}, null)).get(0).predictions().get(0);
        int n = (int) p.samples();
        double[] x0 = {15.0, 3.0, 8.0, 11.0};
        double[] clean = noiseFreeOutputs(model, x0, n);
        Random random = new Random(SEED);
        double[] sum = new double[4];
        double[] squares = new double[4];
        for (int draw = 0; draw < DRAWS; draw++) {
            double[] y = clean.clone();
            for (int i = 0; i < y.length; i++) {
                y[i] += sigma * random.nextGaussian();
            }
            Estimate e = solve(model, new Trace(times(n), y, new double[n * 2], 2, 2, null));
            for (int i = 0; i < 4; i++) {
                double err = e.solution()[i] - x0[i];
                sum[i] += err;
                squares[i] += err * err;
            }
        }
        for (int i = 0; i < 4; i++) {
            double mean = sum[i] / DRAWS;
            double variance = (squares[i] - DRAWS * mean * mean) / (DRAWS - 1);
            double predicted = p.standardErrors()[i] * p.standardErrors()[i];
            assertEquals(0.0, mean, BAND * p.standardErrors()[i] / Math.sqrt(DRAWS), "mean error of x0[" + i + "]");
            assertEquals(1.0, variance / predicted, BAND * Math.sqrt(2.0 / (DRAWS - 1)),
                    "empirical / predicted variance of x0[" + i + "]");
        }
    }

    /** Outputs and inputs drawn at random: the covariance must not care. Unmeasured outputs are missing. */
    private static Trace arbitraryTrace(int samples, int[] measured, double[] sigma, Random random) {
        double[] y = new double[samples * 2];
        Arrays.fill(y, Double.NaN);
        double[] u = new double[samples * 2];
        for (int k = 0; k < samples; k++) {
            for (int j : measured) {
                y[k * 2 + j] = 5.0 + random.nextGaussian();
            }
            u[k * 2] = 10.0 * random.nextDouble();
            u[k * 2 + 1] = 30.0 + random.nextGaussian();
        }
        return new Trace(times(samples), y, u, 2, 2, sigma);
    }

    private static double[] times(int samples) {
        double[] t = new double[samples];
        for (int k = 0; k < samples; k++) {
            t[k] = T0 + k * PERIOD;
        }
        return t;
    }

    /** y_k = C Φ(kT) x0 with no input, stepping x by the zero-order-hold transition over T. */
    private static double[] noiseFreeOutputs(StateSpaceModel model, double[] x0, int samples) {
        double[] phi = ZeroOrderHold.discretize(model.a(), model.b(), 4, 2, PERIOD).transition();
        double[] c = model.c();
        double[] x = x0.clone();
        double[] next = new double[4];
        double[] y = new double[samples * 2];
        for (int k = 0; k < samples; k++) {
            Matrices.multiplyVector(c, x, 2, 4, next);
            y[k * 2] = next[0];
            y[k * 2 + 1] = next[1];
            Matrices.multiplyVector(phi, x, 4, 4, next);
            System.arraycopy(next, 0, x, 0, 4);
        }
        return y;
    }

    private static Estimate solve(StateSpaceModel model, Trace trace) {
        EstimationResult result = InitialStateEstimator.solve(model, trace, EstimationOptions.defaults().withKeepSeries(false));
        assertTrue(result instanceof Estimate, "got " + result);
        return (Estimate) result;
    }

    static StateSpaceModel reefer() throws IOException {
        JsonNode m = new ObjectMapper().readTree(EstimateCases.root().getParent().getParent()
                .resolve("demo/models/reefer-40.v1.json").toFile());
        double[] sigma = new double[m.get("outputs").size()];
        for (int j = 0; j < sigma.length; j++) {
            sigma[j] = m.get("outputs").get(j).get("noiseSigma").asDouble();
        }
        return StateSpaceModel.continuous(EstimateCases.matrix(m.get("a")), EstimateCases.matrix(m.get("b")),
                EstimateCases.matrix(m.get("c")), EstimateCases.matrix(m.get("d")), sigma);
    }
}
