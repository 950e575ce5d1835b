package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.stream.Stream;

/**
 * Loads the reference cases written by {@code test-data/reference/generate_estimates.py}
 * (format in {@code test-data/reference/README.md}) and compares vectors and matrices.
 *
 * <p>Matrices in the JSON are nested arrays; they are flattened row-major here to match the API.
 * A JSON null in a vector or matrix reads as NaN (a missing output, or "σ not given").
 */
final class EstimateCases {
    private static final ObjectMapper JSON = new ObjectMapper();

    private EstimateCases() {
    }

    /** One reference case: the inputs of a solve and the generator's expected values. */
    record Case(String name, JsonNode json, StateSpaceModel model, Trace trace, EstimationOptions options) {
        JsonNode expected() {
            return json.get("expected");
        }

        boolean solved() {
            return "estimate".equals(expected().get("result").asText());
        }

        boolean noiseFree() {
            return json.get("truth").get("noiseFree").asBoolean();
        }

        /** The generator's relative tolerance for one group of quantities (see generate_estimates.py). */
        double tolerance(String key) {
            return json.get("tolerance").get(key).asDouble();
        }

        Estimate solveExpectingEstimate() {
            EstimationResult result = InitialStateEstimator.solve(model, trace, options);
            assertTrue(result instanceof Estimate, name + ": got " + result.getClass().getSimpleName()
                    + ", expected an Estimate");
            return (Estimate) result;
        }

        @Override
        public String toString() {
            return name;
        }
    }

    static Path root() {
        String configured = System.getProperty("backstate.testData");
        Path base = configured == null || configured.isBlank() ? Path.of("..", "test-data") : Path.of(configured);
        return base.resolve("reference").resolve("estimates");
    }

    static JsonNode read(String fileName) {
        try {
            return JSON.readTree(root().resolve(fileName).toFile());
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    static List<Case> all() {
        try (Stream<Path> files = Files.list(root())) {
            List<Case> cases = files.map(p -> p.getFileName().toString())
                    .filter(f -> f.startsWith("case-") && f.endsWith(".json"))
                    .sorted()
                    .map(f -> load(read(f)))
                    .toList();
            assertTrue(cases.size() >= 12, "got " + cases.size() + " reference cases in " + root() + ", expected 12");
            return cases;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    static Stream<Case> solvedCases() {
        return all().stream().filter(Case::solved);
    }

    static Case named(String name) {
        return load(read("case-" + name + ".json"));
    }

    static Case load(JsonNode json) {
        StateSpaceModel model = model(json.get("model"));
        JsonNode t = json.get("trace");
        Trace trace = trace(t, flat(t.get("outputs")), model);
        return new Case(json.get("name").asText(), json, model, trace, options(json.get("options")));
    }

    static StateSpaceModel model(JsonNode m) {
        double[][] a = matrix(m.get("a"));
        double[][] b = m.get("b").isNull() ? null : matrix(m.get("b"));
        double[][] c = matrix(m.get("c"));
        double[][] d = m.get("d").isNull() ? null : matrix(m.get("d"));
        double[] sigma = m.get("noiseSigma").isNull() ? null : vector(m.get("noiseSigma"));
        return "discrete".equals(m.get("kind").asText())
                ? StateSpaceModel.discrete(a, b, c, d, m.get("samplePeriod").asDouble(), sigma)
                : StateSpaceModel.continuous(a, b, c, d, sigma);
    }

    /** The case's trace with the given outputs (N×p row-major) in place of the stored ones. */
    static Trace trace(JsonNode t, double[] outputs, StateSpaceModel model) {
        double[] inputs = t.get("inputs").isNull() ? null : flat(t.get("inputs"));
        double[] sigma = t.get("noiseSigma").isNull() ? null : vector(t.get("noiseSigma"));
        return new Trace(vector(t.get("times")), outputs, inputs, model.outputs(), model.inputs(), sigma);
    }

    static EstimationOptions options(JsonNode o) {
        EstimationOptions options = EstimationOptions.defaults()
                .withFormulation(Formulation.valueOf(o.get("formulation").asText()))
                .withOffsets(o.get("offsets").asBoolean());
        JsonNode prior = o.get("prior");
        if (prior != null && !prior.isNull()) {
            options = options.withPrior(new Prior(vector(prior.get("mean")), flat(prior.get("covariance"))));
        }
        JsonNode ref = o.get("referenceTime");
        if (ref != null && !ref.isNull()) {
            options = options.withReferenceTime(ref.asDouble());
        }
        return options;
    }

    static double[] vector(JsonNode array) {
        double[] out = new double[array.size()];
        for (int i = 0; i < out.length; i++) {
            JsonNode v = array.get(i);
            out[i] = v.isNull() ? Double.NaN : v.asDouble();
        }
        return out;
    }

    static double[][] matrix(JsonNode rows) {
        double[][] out = new double[rows.size()][];
        for (int i = 0; i < out.length; i++) {
            out[i] = vector(rows.get(i));
        }
        return out;
    }

    /** Nested rows flattened row-major. */
    static double[] flat(JsonNode rows) {
        double[][] m = matrix(rows);
        int cols = m.length == 0 ? 0 : m[0].length;
        double[] out = new double[m.length * cols];
        for (int i = 0; i < m.length; i++) {
            System.arraycopy(m[i], 0, out, i * cols, cols);
        }
        return out;
    }

    static double norm(double[] v) {
        double s = 0.0;
        for (double x : v) {
            s += x * x;
        }
        return Math.sqrt(s);
    }

    /** Asserts ‖actual − expected‖₂ ≤ relTol · ‖expected‖₂ (Frobenius for flattened matrices). */
    static void assertCloseNormwise(double[] expected, double[] actual, double relTol, String what) {
        assertEquals(expected.length, actual.length, what + ": length");
        double[] diff = new double[expected.length];
        for (int i = 0; i < diff.length; i++) {
            diff[i] = actual[i] - expected[i];
        }
        double err = norm(diff);
        double scale = norm(expected);
        assertTrue(err <= relTol * scale, () -> what + ": relative error " + err / scale + " > " + relTol
                + "\n expected " + java.util.Arrays.toString(expected)
                + "\n actual   " + java.util.Arrays.toString(actual));
    }

    /** Asserts |actual − expected| ≤ relTol · |expected|. */
    static void assertCloseRelative(double expected, double actual, double relTol, String what) {
        assertEquals(expected, actual, relTol * Math.abs(expected), what);
    }
}
