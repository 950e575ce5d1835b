package backstate.estimation;

import static backstate.estimation.EstimateCases.assertCloseNormwise;
import static backstate.estimation.EstimateCases.assertCloseRelative;
import static backstate.estimation.EstimateCases.flat;
import static backstate.estimation.EstimateCases.matrix;
import static backstate.estimation.EstimateCases.vector;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.util.ArrayList;
import java.util.List;
import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * The smoother against {@code test-data/reference/process-noise.json} from
 * {@code generate_process_noise.py}: the same maximum a posteriori problem written as one dense
 * least-squares problem over every state x_0 … x_{N−1} (process-noise equations stacked, whitened
 * by a Cholesky factor of Q_d) or, where Q_d is singular, over x_0 and every noise vector; solved by
 * numpy.linalg.lstsq, covariances from numpy.linalg.svd; Q_d by scipy.integrate.quad_vec. Four
 * cases: uniform times; input with feed-through, missing samples, uneven times and a prior; singular
 * noise with sensor offsets; a discrete model with skipped periods. Tolerance 1e-9 relative
 * (normwise): both sides are backward-stable orthogonal solves of well-conditioned problems
 * (κ of the stacked matrix below 1e4), and quad_vec is asked for 1e-13.
 */
class ProcessNoiseSmootherReferenceTest {
    static final double TOLERANCE = 1e-9;

    static JsonNode reference() {
        try {
            return new ObjectMapper().readTree(EstimateCases.root().getParent().resolve("process-noise.json").toFile());
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    static Stream<JsonNode> cases() {
        List<JsonNode> out = new ArrayList<>();
        reference().get("cases").forEach(out::add);
        return out.stream();
    }

    static Stream<JsonNode> covariances() {
        List<JsonNode> out = new ArrayList<>();
        reference().get("covariances").forEach(out::add);
        return out.stream();
    }

    static StateSpaceModel model(JsonNode m) {
        double[][] a = matrix(m.get("a"));
        double[][] b = m.get("b").isNull() ? null : matrix(m.get("b"));
        double[][] c = matrix(m.get("c"));
        double[][] d = m.get("d").isNull() ? null : matrix(m.get("d"));
        StateSpaceModel model = "discrete".equals(m.get("kind").asText())
                ? StateSpaceModel.discrete(a, b, c, d, m.get("samplePeriod").asDouble(), null)
                : StateSpaceModel.continuous(a, b, c, d, null);
        return model.withProcessNoise(matrix(m.get("processNoise")));
    }

    static Trace trace(JsonNode t, StateSpaceModel model) {
        double[] inputs = t.get("inputs").isNull() ? null : flat(t.get("inputs"));
        return new Trace(vector(t.get("times")), flat(t.get("outputs")), inputs, model.outputs(), model.inputs(),
                vector(t.get("sigma")));
    }

    static EstimationOptions options(JsonNode o) {
        EstimationOptions options = EstimationOptions.defaults().withFormulation(Formulation.PROCESS_NOISE)
                .withOffsets(o.get("estimateOffsets").asBoolean());
        JsonNode prior = o.get("prior");
        if (!prior.isNull()) {
            options = options.withPrior(new Prior(vector(prior.get("mean")), flat(prior.get("covariance"))));
        }
        return options;
    }

    static Estimate solve(JsonNode c) {
        StateSpaceModel model = model(c.get("model"));
        EstimationResult result = InitialStateEstimator.solve(model, trace(c.get("trace"), model), options(c.get("options")));
        return assertInstanceOf(Estimate.class, result, c.get("name").asText());
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("cases")
    void x0_and_its_covariance_match_the_dense_numpy_solve(JsonNode c) {
        Estimate e = solve(c);
        JsonNode x = c.get("expected");
        String name = c.get("name").asText();
        assertCloseNormwise(vector(x.get("solution")), e.solution(), TOLERANCE, name + " solution");
        assertCloseNormwise(flat(x.get("covariance")), e.covariance(), TOLERANCE, name + " covariance");
        assertCloseRelative(x.get("chiSquare").asDouble(), e.chiSquare(), TOLERANCE, name + " chi-square");
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("cases")
    void smoothed_trajectory_and_its_variances_match_the_dense_numpy_solve(JsonNode c) {
        Estimate e = solve(c);
        JsonNode x = c.get("expected");
        String name = c.get("name").asText();
        assertCloseNormwise(flat(x.get("states")), e.series().states(), TOLERANCE, name + " states");
        double[] variances = e.series().stateStandardErrors().clone();
        for (int i = 0; i < variances.length; i++) {
            variances[i] *= variances[i];
        }
        assertCloseNormwise(flat(x.get("stateVariances")), variances, TOLERANCE, name + " state variances");
        assertCloseNormwise(flat(x.get("windowEndCovariance")), e.windowEnd().covariance(), TOLERANCE,
                name + " window-end covariance");
    }

    @ParameterizedTest(name = "{index}: {0}")
    @MethodSource("covariances")
    void interval_covariance_matches_quad_vec(JsonNode c) {
        double[] a = flat(c.get("a"));
        double[] q = flat(c.get("q"));
        int n = c.get("a").size();
        double[] actual = "discrete".equals(c.get("kind").asText())
                ? ProcessNoiseCovariance.discrete(a, q, n, c.get("steps").asLong())
                : ProcessNoiseCovariance.continuous(a, q, n, c.get("h").asDouble());
        assertCloseNormwise(flat(c.get("expected")), actual, TOLERANCE, "Q_d " + c);
        double[] g = ProcessNoiseCovariance.factor(actual, n).g();
        int r = ProcessNoiseCovariance.factor(actual, n).rank();
        double[] product = Matrices.multiply(g, Matrices.transpose(g, n, r), n, r, n);
        assertCloseNormwise(actual, product, TOLERANCE, "G Gᵀ");
        assertEquals(n * r, g.length);
    }
}
