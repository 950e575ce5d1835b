package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertThrows;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.ArrayList;
import java.util.List;
import java.util.stream.Stream;
import org.junit.jupiter.api.DynamicTest;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestFactory;

class ZeroOrderHoldTest {
    /**
     * Absolute tolerance for closed forms whose entries are O(1): a few ulp from the exponential
     * and the reading-off, with the block norms here below 3.
     */
    private static final double CLOSED_FORM_ABSOLUTE = 1e-15;

    /** Relative Frobenius tolerance against scipy's block expm; see MatrixExponentialReferenceTest. */
    private static final double ZOH_RELATIVE_PER_NORM = 1e-14;

    /**
     * Relative Frobenius tolerance against numpy.linalg.matrix_power and a step-by-step sum. Both
     * are exact-arithmetic identities evaluated in different orders; rounding grows at most
     * linearly in the number of products for spectral radius ≤ 1 (Higham, Accuracy and Stability
     * of Numerical Algorithms, 2nd ed., §3.5 on products, from memory), so allow u per step × 64.
     */
    private static final double POWER_RELATIVE_PER_STEP = 64 * 0x1.0p-53;

    @Test
    void double_integrator_holds_input_as_quadratic_and_linear_terms() {
        // Closed form, derived by hand: A = [[0,1],[0,0]] is nilpotent, exp(Ah) = [[1,h],[0,1]],
        // and ∫₀ʰ exp(As) ds B with B = [0;1] is ∫₀ʰ [s; 1] ds = [h²/2; h].
        double h = 0.37;
        ZeroOrderHold.Step step = ZeroOrderHold.discretize(new double[] {0, 1, 0, 0}, new double[] {0, 1}, 2, 1, h);
        assertArrayEquals(new double[] {1, h, 0, 1}, step.transition(), CLOSED_FORM_ABSOLUTE);
        assertArrayEquals(new double[] {h * h / 2, h}, step.input(), CLOSED_FORM_ABSOLUTE);
    }

    @Test
    void first_order_lag_matches_its_closed_form() {
        // Closed form, derived by hand: dx/dt = −a x + b u with u held gives
        // x(h) = e^{−ah} x(0) + b(1 − e^{−ah})/a u.
        double a = 2.5;
        double b = 4.0;
        double h = 0.3;
        ZeroOrderHold.Step step = ZeroOrderHold.discretize(new double[] {-a}, new double[] {b}, 1, 1, h);
        assertEquals(Math.exp(-a * h), step.transition()[0], CLOSED_FORM_ABSOLUTE);
        assertEquals(b * -Math.expm1(-a * h) / a, step.input()[0], CLOSED_FORM_ABSOLUTE);
    }

    /**
     * The unit an input is given in must not change the transition: b from 1e-3 to 1e9 over a slow
     * lag (a h = −1e-3) leaves Ad = e^{ah} and Bd/b = (e^{ah} − 1)/a to a few ulp. Closed form as
     * above (Math.exp and Math.expm1, each within 1 ulp). Squared by the whole block's norm
     * instead, Ad's relative error was 1e-11 at b = 1, 1e-8 at 1e3 and 1e-3 at 1e9.
     */
    @Test
    void the_scale_of_b_does_not_change_the_accuracy_of_either_matrix() {
        double a = -1e-9;
        double h = 1e6;
        for (double b : new double[] {1e-3, 1.0, 1e3, 1e6, 1e9}) {
            ZeroOrderHold.Step step = ZeroOrderHold.discretize(new double[] {a}, new double[] {b}, 1, 1, h);
            assertEquals(Math.exp(a * h), step.transition()[0], 4 * Math.ulp(1.0), "Ad with b = " + b);
            double expected = b * Math.expm1(a * h) / a;
            assertEquals(expected, step.input()[0], 4 * Math.ulp(expected), "Bd with b = " + b);
        }
    }

    @Test
    void no_inputs_gives_the_exponential_and_an_empty_input_matrix() {
        // Closed form: with m = 0 the block is A itself; rotation generator as in MatrixExponentialTest.
        double h = 0.5;
        for (double[] b : new double[][] {null, new double[0]}) {
            ZeroOrderHold.Step step = ZeroOrderHold.discretize(new double[] {0, 1, -1, 0}, b, 2, 0, h);
            assertArrayEquals(new double[] {Math.cos(h), Math.sin(h), -Math.sin(h), Math.cos(h)},
                    step.transition(), CLOSED_FORM_ABSOLUTE);
            assertEquals(0, step.input().length);
        }
    }

    @Test
    void a_power_past_the_int_range_is_taken_whole() {
        // Closed form: the integrator A = [1], B = [1] gives A^s = 1 and Σ_{i<s} B = s, exactly in doubles for s < 2^53.
        long steps = 3_000_000_000L;
        ZeroOrderHold.Step step = ZeroOrderHold.power(new double[] {1}, new double[] {1}, 1, 1, steps);
        assertEquals(1.0, step.transition()[0]);
        assertEquals(3e9, step.input()[0]);
        // A = [−1]: (−1)^s = 1 for even s, and the sum of s alternating terms is 0.
        assertEquals(1.0, ZeroOrderHold.power(new double[] {-1}, new double[] {1}, 1, 1, steps).transition()[0]);
        assertEquals(0.0, ZeroOrderHold.power(new double[] {-1}, new double[] {1}, 1, 1, steps).input()[0]);
    }

    /**
     * A discrete model over a gap of more sample periods than an int counts (3·10⁹ periods of 1 ms,
     * about 35 days) solves: a constant state seen three times with equal noise is estimated by the
     * mean of the three readings (closed form of least squares with one unknown).
     */
    @Test
    void a_discrete_trace_with_a_gap_of_more_than_two_to_the_31_periods_solves() {
        StateSpaceModel model = StateSpaceModel.discrete(new double[][] {{1}}, null, new double[][] {{1}}, null, 1e-3,
                new double[] {0.1});
        Trace trace = new Trace(new double[] {0, 0.001, 3e6}, new double[] {2.0, 2.2, 2.1}, null, 1, 0, null);
        EstimationResult result = InitialStateEstimator.solve(model, trace, EstimationOptions.defaults());
        Estimate estimate = assertInstanceOf(Estimate.class, result);
        assertEquals(2.1, estimate.initialState(1)[0], 1e-12);
    }

    @Test
    void scalar_power_sums_a_geometric_series() {
        // Closed form: A = [a] gives A^s = a^s and Σ_{i<s} a^i b = b(1 − a^s)/(1 − a).
        double a = 0.9;
        double b = 2.0;
        for (int steps : new int[] {1, 2, 3, 10, 37, 255, 256}) {
            ZeroOrderHold.Step step = ZeroOrderHold.power(new double[] {a}, new double[] {b}, 1, 1, steps);
            double tolerance = POWER_RELATIVE_PER_STEP * steps;
            double power = Math.pow(a, steps);
            assertEquals(power, step.transition()[0], tolerance * power, "A^" + steps);
            double sum = b * (1 - power) / (1 - a);
            assertEquals(sum, step.input()[0], tolerance * sum, "sum to " + steps);
        }
    }

    @Test
    void shift_matrix_power_is_exact() {
        // Closed form, derived by hand: the 3×3 up-shift S (ones on the superdiagonal) has
        // S² = e₀e₂ᵀ and S³ = 0; with B = e₂, Σ_{i<s} S^i B = [1,1,1]ᵀ for s ≥ 3.
        double[] shift = {0, 1, 0, 0, 0, 1, 0, 0, 0};
        ZeroOrderHold.Step two = ZeroOrderHold.power(shift, new double[] {0, 0, 1}, 3, 1, 2);
        assertArrayEquals(new double[] {0, 0, 1, 0, 0, 0, 0, 0, 0}, two.transition(), 0.0);
        assertArrayEquals(new double[] {0, 1, 1}, two.input(), 0.0);
        ZeroOrderHold.Step five = ZeroOrderHold.power(shift, new double[] {0, 0, 1}, 3, 1, 5);
        assertArrayEquals(new double[9], five.transition(), 0.0);
        assertArrayEquals(new double[] {1, 1, 1}, five.input(), 0.0);
    }

    @Test
    void rejects_bad_arguments_before_work() {
        double[] a = {0, 1, 0, 0};
        assertEquals("h: got 0.0, expected a finite value > 0", assertThrows(IllegalArgumentException.class,
                () -> ZeroOrderHold.discretize(a, new double[] {0, 1}, 2, 1, 0.0)).getMessage());
        assertEquals("b: got length 3, expected 2x1 = 2", assertThrows(IllegalArgumentException.class,
                () -> ZeroOrderHold.discretize(a, new double[] {0, 1, 2}, 2, 1, 0.1)).getMessage());
        assertEquals("b: got null, expected 2x1 row-major array of length 2", assertThrows(
                IllegalArgumentException.class, () -> ZeroOrderHold.discretize(a, null, 2, 1, 0.1)).getMessage());
        assertEquals("b[1][0]: got NaN, expected a finite value", assertThrows(IllegalArgumentException.class,
                () -> ZeroOrderHold.discretize(a, new double[] {0, Double.NaN}, 2, 1, 0.1)).getMessage());
        assertEquals("steps: got 0, expected at least 1", assertThrows(IllegalArgumentException.class,
                () -> ZeroOrderHold.power(a, new double[] {0, 1}, 2, 1, 0)).getMessage());
        assertEquals("m: got -1, expected at least 0", assertThrows(IllegalArgumentException.class,
                () -> ZeroOrderHold.power(a, null, 2, -1, 3)).getMessage());
    }

    @TestFactory
    Stream<DynamicTest> discretize_matches_scipy_block_expm() {
        List<DynamicTest> tests = new ArrayList<>();
        for (JsonNode c : TransitionReference.load().get("zeroOrderHold")) {
            tests.add(DynamicTest.dynamicTest(c.get("name").asText(), () -> {
                int n = c.get("n").asInt();
                int m = c.get("m").asInt();
                double h = c.get("h").asDouble();
                double[] a = TransitionReference.matrix(c, "a", n, n);
                double[] b = TransitionReference.matrix(c, "b", n, m);
                ZeroOrderHold.Step step = ZeroOrderHold.discretize(a, b, n, m, h);
                double[] block = new double[(n + m) * (n + m)];
                Matrices.copyBlock(a, n, n, n, block, n + m, 0, 0);
                Matrices.copyBlock(b, m, n, m, block, n + m, 0, n);
                double tolerance = ZOH_RELATIVE_PER_NORM * Math.max(1.0, h * Matrices.norm1(block, n + m, n + m));
                // Expected: scipy.linalg.expm of the block, equal to scipy.signal.cont2discrete(method='zoh').
                TransitionReference.assertRelativeFrobenius(TransitionReference.matrix(c, "transition", n, n),
                        step.transition(), tolerance, "Ad");
                TransitionReference.assertRelativeFrobenius(TransitionReference.matrix(c, "input", n, m),
                        step.input(), tolerance, "Bd");
            }));
        }
        return tests.stream();
    }

    @TestFactory
    Stream<DynamicTest> power_matches_numpy_matrix_power() {
        List<DynamicTest> tests = new ArrayList<>();
        for (JsonNode c : TransitionReference.load().get("power")) {
            tests.add(DynamicTest.dynamicTest(c.get("name").asText(), () -> {
                int n = c.get("n").asInt();
                int m = c.get("m").asInt();
                int steps = c.get("steps").asInt();
                double[] a = TransitionReference.matrix(c, "a", n, n);
                double[] b = TransitionReference.matrix(c, "b", n, m);
                ZeroOrderHold.Step step = ZeroOrderHold.power(a, b, n, m, steps);
                double tolerance = POWER_RELATIVE_PER_STEP * steps;
                // Expected: numpy.linalg.matrix_power(A, s) and Σ_{i<s} A^i B summed step by step in numpy.
                TransitionReference.assertRelativeFrobenius(TransitionReference.matrix(c, "transition", n, n),
                        step.transition(), tolerance, "A^s");
                TransitionReference.assertRelativeFrobenius(TransitionReference.matrix(c, "input", n, m),
                        step.input(), tolerance, "sum of A^i B");
            }));
        }
        return tests.stream();
    }
}
