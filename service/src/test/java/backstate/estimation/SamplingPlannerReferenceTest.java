package backstate.estimation;

import static backstate.estimation.EstimateCases.assertCloseNormwise;
import static backstate.estimation.EstimateCases.flat;
import static backstate.estimation.EstimateCases.vector;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.util.ArrayList;
import java.util.List;
import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Planner predictions against numpy / scipy (test-data/reference/generate_planning.py): the
 * stacked matrix of each plan with Φ(t_k) from scipy.linalg.expm per sample (no recursion),
 * covariance from numpy's SVD, rank by numpy's matrix_rank rule, null space by
 * scipy.linalg.null_space, structural observability by the Kalman matrix's rank. Tolerances
 * are the generator's per horizon: max(1e-12, 10·κ(W)·eps).
 */
class SamplingPlannerReferenceTest {

    /** W = MᵀM is formed from the same rows by both; its entries agree to a few eps of the largest. */
    static final double INFORMATION_TOLERANCE = 1e-12;
    /** Unit vectors from two SVD routes; their projectors agree to a few eps on these well-separated null spaces. */
    static final double NULL_SPACE_TOLERANCE = 1e-12;

    static Stream<JsonNode> cases() throws IOException {
        JsonNode root = new ObjectMapper().readTree(EstimateCases.root().resolveSibling("planning.json").toFile());
        List<JsonNode> out = new ArrayList<>();
        root.get("cases").forEach(out::add);
        return out.stream();
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("cases")
    void predictions_match_numpy(JsonNode c) {
        StateSpaceModel model = model(c.get("model"));
        JsonNode plan = c.get("plan");
        int[][] subsets = new int[plan.get("outputSubsets").size()][];
        for (int i = 0; i < subsets.length; i++) {
            JsonNode s = plan.get("outputSubsets").get(i);
            subsets[i] = new int[s.size()];
            for (int j = 0; j < s.size(); j++) {
                subsets[i][j] = s.get(j).asInt();
            }
        }
        List<SamplingPlanner.SubsetPlan> result = SamplingPlanner.plan(model, new SamplingPlanner.Plan(
                plan.get("samplePeriod").asDouble(), vector(plan.get("horizons")), subsets,
                vector(plan.get("noiseSigma")), null));
        int n = model.states();
        for (int i = 0; i < subsets.length; i++) {
            JsonNode expected = c.get("plans").get(i);
            SamplingPlanner.SubsetPlan got = result.get(i);
            assertEquals(expected.get("observable").asBoolean(), got.observable(), c.get("name") + " subset " + i);
            for (int h = 0; h < got.predictions().size(); h++) {
                JsonNode e = expected.get("predictions").get(h);
                SamplingPlanner.Prediction p = got.predictions().get(h);
                String label = c.get("name").asText() + " subset " + i + " horizon " + e.get("horizon").asDouble();
                assertEquals(e.get("samples").asLong(), p.samples(), label);
                assertEquals(e.get("equations").asLong(), p.equations(), label);
                assertEquals(e.get("rank").asInt(), p.rank(), label);
                assertCloseNormwise(flat(e.get("information")), p.information(), INFORMATION_TOLERANCE, label + " W");
                double rtol = e.get("rtol").asDouble();
                if (e.get("covariance").isNull()) {
                    assertNull(p.covariance(), label);
                    List<double[]> expectedNull = new ArrayList<>();
                    e.get("nullDirections").forEach(d -> expectedNull.add(vector(d)));
                    assertSameSpan(expectedNull, p.unobservableDirections(), label);
                } else {
                    assertCloseNormwise(flat(e.get("covariance")), p.covariance(), rtol, label + " covariance");
                    double[] se = vector(e.get("standardErrors"));
                    for (int s = 0; s < n; s++) {
                        assertEquals(se[s], p.standardErrors()[s], rtol * se[s], label + " se[" + s + "]");
                    }
                    double kappa = e.get("conditionNumber").asDouble();
                    assertEquals(kappa, p.conditionNumber(), rtol * kappa, label + " κ");
                }
            }
        }
    }

    /** Unit vectors equal up to sign (a null space basis of dimension 1 is unique up to sign). */
    static void assertSameLine(double[] expected, double[] got, String label) {
        double dot = 0.0;
        for (int i = 0; i < got.length; i++) {
            dot += expected[i] * got[i];
        }
        assertEquals(1.0, Math.abs(dot), NULL_SPACE_TOLERANCE, label + " null direction");
    }

    /** Orthonormal bases of one subspace have the same projector Σ v vᵀ (bases themselves are not unique). */
    static void assertSameSpan(List<double[]> expected, List<double[]> got, String label) {
        assertEquals(expected.size(), got.size(), label + " null space dimension");
        assertCloseNormwise(projector(expected), projector(got), NULL_SPACE_TOLERANCE, label + " null space");
    }

    private static double[] projector(List<double[]> basis) {
        int n = basis.get(0).length;
        double[] p = new double[n * n];
        for (double[] v : basis) {
            for (int i = 0; i < n; i++) {
                for (int j = 0; j < n; j++) {
                    p[i * n + j] += v[i] * v[j];
                }
            }
        }
        return p;
    }

    static StateSpaceModel model(JsonNode m) {
        double[][] a = EstimateCases.matrix(m.get("a"));
        double[][] c = EstimateCases.matrix(m.get("c"));
        return "discrete".equals(m.get("kind").asText())
                ? StateSpaceModel.discrete(a, null, c, null, m.get("samplePeriod").asDouble(), null)
                : StateSpaceModel.continuous(a, null, c, null, null);
    }
}
