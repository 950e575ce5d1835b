package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;

/**
 * Reads test-data/reference/transitions.json, written by generate_transitions.py (numpy/scipy),
 * and offers the comparison used against it.
 */
final class TransitionReference {
    private TransitionReference() {
    }

    /** Loads the catalogue from the directory named by the {@code backstate.testData} system property. */
    static JsonNode load() {
        String dir = System.getProperty("backstate.testData");
        assertNotNull(dir, "system property backstate.testData: got null, expected the test-data "
                + "directory (surefire sets it in service/pom.xml)");
        Path file = Path.of(dir, "reference", "transitions.json");
        assertTrue(Files.isRegularFile(file), "reference file: got missing " + file
                + ", expected output of test-data/reference/generate_transitions.py");
        try {
            return new ObjectMapper().readTree(file.toFile());
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /** Reads a flat row-major array field and checks its length against rows×cols. */
    static double[] matrix(JsonNode node, String field, int rows, int cols) {
        JsonNode values = node.get(field);
        assertNotNull(values, "field " + field + " missing in case " + node.get("name"));
        assertEquals(rows * cols, values.size(), "length of " + field + " in " + node.get("name"));
        double[] out = new double[values.size()];
        for (int i = 0; i < out.length; i++) {
            out[i] = values.get(i).doubleValue();
        }
        return out;
    }

    /** ‖actual − expected‖_F / ‖expected‖_F (plain difference norm when expected is zero). */
    static double relativeFrobenius(double[] actual, double[] expected) {
        assertEquals(expected.length, actual.length, "array length");
        double diff = 0.0;
        double ref = 0.0;
        for (int i = 0; i < expected.length; i++) {
            double d = actual[i] - expected[i];
            diff += d * d;
            ref += expected[i] * expected[i];
        }
        return ref == 0.0 ? Math.sqrt(diff) : Math.sqrt(diff / ref);
    }

    /** Asserts relativeFrobenius(actual, expected) ≤ tolerance, reporting the observed value. */
    static void assertRelativeFrobenius(double[] expected, double[] actual, double tolerance, String what) {
        double error = relativeFrobenius(actual, expected);
        assertTrue(error <= tolerance, what + ": relative Frobenius error got " + error
                + ", expected <= " + tolerance);
    }
}
