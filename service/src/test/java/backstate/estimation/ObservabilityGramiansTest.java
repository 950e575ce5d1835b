package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.ArrayList;
import java.util.List;
import java.util.Random;
import java.util.stream.Stream;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.EigenDecomposition;
import org.junit.jupiter.api.DynamicTest;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestFactory;

class ObservabilityGramiansTest {
    /** Unit roundoff of IEEE double, 2⁻⁵³. */
    private static final double U = 0x1.0p-53;

    /**
     * Relative tolerance for closed forms: the 2n×2n block exponential has norm below 10 here,
     * and the product F22ᵀF12 adds a few ulp; 256 u leaves room for that and nothing more.
     */
    private static final double CLOSED_FORM_RELATIVE = 256 * U;

    /**
     * Relative Frobenius tolerance against scipy.integrate.quad_vec, which was asked for
     * epsabs 1e-15, epsrel 1e-13 and reported error estimates below 3e-13 absolute on entries of
     * order 1 to 10; our side adds about u·max(‖A‖T, 1) from the exponential and the doublings
     * (‖A‖T ≤ 41 here). 1e-11 covers both with margin and still catches any wrong term.
     */
    private static final double QUADRATURE_RELATIVE = 1e-11;

    /**
     * Smallest eigenvalue allowed relative to the largest when checking positive
     * semi-definiteness: the exact Gramian is PSD, so a negative eigenvalue can only be rounding,
     * of size about u·‖W‖ times the few-ulp error of the block exponential.
     */
    private static final double PSD_RELATIVE = 1e-13;

    @Test
    void double_integrator_gives_polynomial_gramian() {
        // Closed form, derived by hand: A = [[0,1],[0,0]], C = [1,0] give C exp(At) = [1, t], so
        // W(T) = ∫₀ᵀ [1, t; t, t²] dt = [[T, T²/2], [T²/2, T³/3]].
        for (double horizon : new double[] {0.01, 0.5, 2.0, 7.0}) {
            double[] w = ObservabilityGramians.continuousFinite(new double[] {0, 1, 0, 0}, new double[] {1, 0}, 2, 1,
                    horizon);
            double[] expected = {horizon, horizon * horizon / 2, horizon * horizon / 2, Math.pow(horizon, 3) / 3};
            for (int i = 0; i < 4; i++) {
                assertEquals(expected[i], w[i], CLOSED_FORM_RELATIVE * Math.abs(expected[i]), "T=" + horizon + " entry " + i);
            }
        }
    }

    @Test
    void scalar_system_gives_exponential_integral() {
        // Closed form, derived by hand: ∫₀ᵀ c² e^{2at} dt = c² (e^{2aT} − 1)/(2a), stable and unstable a.
        // a = −600 is stiff: a single block exponential over [0, T] would need e^{780} and overflow.
        double c = 1.5;
        double horizon = 1.3;
        for (double a : new double[] {-600.0, -2.0, -0.1, 0.4}) {
            double[] w = ObservabilityGramians.continuousFinite(new double[] {a}, new double[] {c}, 1, 1, horizon);
            double expected = c * c * Math.expm1(2 * a * horizon) / (2 * a);
            assertEquals(expected, w[0], CLOSED_FORM_RELATIVE * expected, "a=" + a);
        }
    }

    @Test
    void gramian_is_symmetric_positive_semidefinite() {
        // Property: W = ∫ Mᵀ M dt with M = C exp(At), so W = Wᵀ and xᵀ W x ≥ 0.
        Random random = new Random(404);
        for (int trial = 0; trial < 20; trial++) {
            int n = 1 + random.nextInt(6);
            int p = 1 + random.nextInt(2);
            double[] a = MatrixExponentialTest.randomWithNorm(random, n, 0.5 + 3 * random.nextDouble());
            double[] c = new double[p * n];
            for (int i = 0; i < c.length; i++) {
                c[i] = random.nextGaussian();
            }
            double[] w = ObservabilityGramians.continuousFinite(a, c, n, p, 0.5 + 2 * random.nextDouble());
            assertArrayEquals(Matrices.transpose(w, n, n), w, 0.0, "symmetric, trial " + trial);
            double[] eigenvalues = new EigenDecomposition(new Array2DRowRealMatrix(Matrices.unflatten(w, n, n)))
                    .getRealEigenvalues();
            double largest = 0.0;
            double smallest = Double.POSITIVE_INFINITY;
            for (double lambda : eigenvalues) {
                largest = Math.max(largest, lambda);
                smallest = Math.min(smallest, lambda);
            }
            assertTrue(largest > 0.0, "trial " + trial + ": largest eigenvalue got " + largest + ", expected > 0");
            assertTrue(smallest >= -PSD_RELATIVE * largest, "trial " + trial + ": smallest eigenvalue got "
                    + smallest + ", expected >= " + (-PSD_RELATIVE * largest));
        }
    }

    @Test
    void rejects_bad_arguments_before_work() {
        double[] a = {0, 1, 0, 0};
        assertEquals("horizon: got -1.0, expected a finite value > 0", assertThrows(IllegalArgumentException.class,
                () -> ObservabilityGramians.continuousFinite(a, new double[] {1, 0}, 2, 1, -1.0)).getMessage());
        assertEquals("c: got length 3, expected 1x2 = 2", assertThrows(IllegalArgumentException.class,
                () -> ObservabilityGramians.continuousFinite(a, new double[] {1, 0, 0}, 2, 1, 1.0)).getMessage());
        assertEquals("a[1][1]: got NaN, expected a finite value", assertThrows(IllegalArgumentException.class,
                () -> ObservabilityGramians.continuousFinite(new double[] {0, 1, 0, Double.NaN}, new double[] {1, 0},
                        2, 1, 1.0)).getMessage());
        assertEquals("max(‖a‖₁, ‖a‖∞) * horizon: got Infinity, expected a finite value", assertThrows(
                IllegalArgumentException.class, () -> ObservabilityGramians.continuousFinite(new double[] {1e300},
                        new double[] {1}, 1, 1, 1e300)).getMessage());
        assertEquals("p: got 0, expected at least 1", assertThrows(IllegalArgumentException.class,
                () -> ObservabilityGramians.continuousFinite(a, new double[0], 2, 0, 1.0)).getMessage());
    }

    @TestFactory
    Stream<DynamicTest> matches_scipy_quadrature() {
        List<DynamicTest> tests = new ArrayList<>();
        for (JsonNode c : TransitionReference.load().get("gramian")) {
            tests.add(DynamicTest.dynamicTest(c.get("name").asText(), () -> {
                int n = c.get("n").asInt();
                int p = c.get("p").asInt();
                double horizon = c.get("horizon").asDouble();
                double[] w = ObservabilityGramians.continuousFinite(TransitionReference.matrix(c, "a", n, n),
                        TransitionReference.matrix(c, "c", p, n), n, p, horizon);
                // Expected: scipy.integrate.quad_vec of exp(Aᵀt)CᵀC exp(At) over [0, T]
                // (stable cases also agree with the Lyapunov identity W∞ − e^{AᵀT} W∞ e^{AT}).
                TransitionReference.assertRelativeFrobenius(TransitionReference.matrix(c, "expected", n, n), w,
                        QUADRATURE_RELATIVE, c.get("name").asText());
            }));
        }
        return tests.stream();
    }
}
