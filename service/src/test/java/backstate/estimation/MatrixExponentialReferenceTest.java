package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.ArrayList;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;
import java.util.stream.Stream;
import org.junit.jupiter.api.DynamicTest;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestFactory;

/** exp(A t) against scipy.linalg.expm values in test-data/reference/transitions.json. */
class MatrixExponentialReferenceTest {
    /**
     * Relative Frobenius tolerance per unit of max(1, ‖A t‖₁). Both sides are backward-stable
     * scaling-and-squaring codes (scipy uses the 2009 Al-Mohy–Higham variant, we the 2005
     * algorithm), and exp has relative condition at least ‖A‖ (Van Loan 1977, from memory), so
     * the two may differ by a modest multiple of u·‖A‖; 1e-14 per unit norm is ~45 u·‖A‖.
     */
    private static final double RELATIVE_PER_NORM = 1e-14;

    @TestFactory
    Stream<DynamicTest> matches_scipy_expm() {
        List<DynamicTest> tests = new ArrayList<>();
        for (JsonNode c : TransitionReference.load().get("exponential")) {
            tests.add(DynamicTest.dynamicTest(c.get("name").asText(), () -> {
                int n = c.get("n").asInt();
                double t = c.get("t").asDouble();
                double[] a = TransitionReference.matrix(c, "a", n, n);
                double[] expected = TransitionReference.matrix(c, "expected", n, n); // scipy.linalg.expm(A t)
                double[] actual = MatrixExponential.exp(a, n, t);
                double tolerance = RELATIVE_PER_NORM * Math.max(1.0, c.get("norm1").asDouble());
                TransitionReference.assertRelativeFrobenius(expected, actual, tolerance, c.get("name").asText());
            }));
        }
        return tests.stream();
    }

    @Test
    void catalogue_exercises_every_pade_degree_and_several_squarings() {
        Set<Integer> degrees = new TreeSet<>();
        int mostSquarings = 0;
        for (JsonNode c : TransitionReference.load().get("exponential")) {
            int n = c.get("n").asInt();
            double t = c.get("t").asDouble();
            double[] at = TransitionReference.matrix(c, "a", n, n);
            for (int i = 0; i < at.length; i++) {
                at[i] *= t;
            }
            MatrixExponential.Plan plan = MatrixExponential.plan(Matrices.norm1(at, n, n));
            degrees.add(plan.degree());
            mostSquarings = Math.max(mostSquarings, plan.squarings());
        }
        assertEquals(Set.of(3, 5, 7, 9, 13), degrees);
        assertTrue(mostSquarings >= 7, "most squarings: got " + mostSquarings + ", expected >= 7");
    }
}
