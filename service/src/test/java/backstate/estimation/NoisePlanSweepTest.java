package backstate.estimation;

import static backstate.estimation.EstimateCases.assertCloseNormwise;
import static backstate.estimation.EstimateCases.flat;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * Planning with process noise against the dense NumPy MAP solve of
 * test-data/reference/process-noise.json, case "oscillator-uniform" (40 samples 0.25 s apart, one
 * output with σ = 0.05, full Q_c, no prior): the predicted covariance of x0 does not depend on the
 * data, so it is the reference's covariance, to the reference test's 1e-9.
 */
class NoisePlanSweepTest {

    @Test
    void predicted_covariance_with_process_noise_matches_the_dense_numpy_solve() {
        JsonNode c = caseNamed("oscillator-uniform");
        StateSpaceModel model = ProcessNoiseSmootherReferenceTest.model(c.get("model"));
        double period = 0.25;
        SamplingPlanner.Plan plan = new SamplingPlanner.Plan(period, new double[] {5.0, 39 * period},
                new int[][] {{0}}, new double[] {0.05}, null);
        List<SamplingPlanner.SubsetPlan> out = SamplingPlanner.plan(model, plan);
        SamplingPlanner.Prediction longest = out.get(0).predictions().get(1);
        assertEquals(40, longest.samples());
        assertCloseNormwise(flat(c.get("expected").get("covariance")), longest.covariance(),
                ProcessNoiseSmootherReferenceTest.TOLERANCE, "predicted covariance");
        SamplingPlanner.Prediction shorter = out.get(0).predictions().get(0);
        for (int i = 0; i < 2; i++) {
            assertTrue(shorter.standardErrors()[i] > longest.standardErrors()[i], "a shorter horizon is less certain");
        }
    }

    @Test
    void process_noise_widens_the_prediction_of_the_same_plan() {
        JsonNode c = caseNamed("oscillator-uniform");
        StateSpaceModel noisy = ProcessNoiseSmootherReferenceTest.model(c.get("model"));
        StateSpaceModel quiet = noisy.withProcessNoise(new double[2][2]);
        SamplingPlanner.Plan plan = new SamplingPlanner.Plan(0.25, new double[] {9.75}, new int[][] {{0}},
                new double[] {0.05}, null);
        double[] withNoise = SamplingPlanner.plan(noisy, plan).get(0).predictions().get(0).standardErrors();
        double[] without = SamplingPlanner.plan(StateSpaceModel.continuous(new double[][] {{0, 1}, {-4, -0.4}}, null,
                new double[][] {{1, 0}}, null, null), plan).get(0).predictions().get(0).standardErrors();
        double[] zero = SamplingPlanner.plan(quiet, plan).get(0).predictions().get(0).standardErrors();
        for (int i = 0; i < 2; i++) {
            assertTrue(withNoise[i] > without[i], "state " + i);
            assertEquals(without[i], zero[i], 1e-9 * without[i], "zero process noise plans as none");
        }
    }

    @Test
    void a_plan_too_long_for_process_noise_is_refused_naming_horizons() {
        StateSpaceModel noisy = ProcessNoiseSmootherReferenceTest.model(caseNamed("oscillator-uniform").get("model"));
        SamplingPlanner.Plan plan = new SamplingPlanner.Plan(0.001, new double[] {60.0, 120.0}, new int[][] {{0}},
                new double[] {0.05}, null);
        assertEquals("horizons", assertThrows(ModelException.class, () -> SamplingPlanner.plan(noisy, plan)).field());
    }

    static JsonNode caseNamed(String name) {
        for (JsonNode c : ProcessNoiseSmootherReferenceTest.reference().get("cases")) {
            if (c.get("name").asText().equals(name)) {
                return c;
            }
        }
        throw new AssertionError("no case " + name);
    }
}
