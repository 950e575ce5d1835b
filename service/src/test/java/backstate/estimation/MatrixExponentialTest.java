package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Random;
import org.junit.jupiter.api.Test;

class MatrixExponentialTest {
    /** Unit roundoff of IEEE double, 2⁻⁵³. */
    private static final double U = 0x1.0p-53;

    /**
     * Entry-wise tolerance for closed forms, as a multiple of u·max(1, ‖A‖₁): exp is a
     * problem of relative condition at least ‖A‖ (C. Van Loan, "The sensitivity of the matrix
     * exponential", SIAM J. Numer. Anal. 14(6):971–981, 1977; from memory), and each of the s
     * squarings may add a few ulp, so 64·u·‖A‖ leaves room
     * for a backward-stable algorithm and no room for a wrong coefficient (which shows at 1e-3
     * or worse).
     */
    private static final double CLOSED_FORM_ULPS = 64;

    /**
     * Identity checks exp(A)exp(−A) = I and exp(A(s+t)) = exp(As)exp(At): the product of two
     * computed factors carries an error of about u·‖A‖·‖F‖·‖G‖ (first-order perturbation of a
     * product, each factor having relative error ~u‖A‖), so the residual is scaled by that.
     */
    private static final double PRODUCT_ULPS = 64;

    @Test
    void rotation_generator_gives_cos_and_sin_for_every_pade_degree() {
        // Closed form, derived by hand: A = [[0, ω], [−ω, 0]] has A² = −ω²I, so the series for
        // exp(At) splits into cos(ωt)·I + sin(ωt)/ω·A = [[cos ωt, sin ωt], [−sin ωt, cos ωt]].
        double omega = 2.0;
        double[] times = {0.004, 0.1, 0.4, 1.0, 2.5, 20.0, 500.0};
        for (double t : times) {
            double wt = omega * t;
            double[] expected = {Math.cos(wt), Math.sin(wt), -Math.sin(wt), Math.cos(wt)};
            double[] actual = MatrixExponential.exp(new double[] {0, omega, -omega, 0}, 2, t);
            double tolerance = CLOSED_FORM_ULPS * U * Math.max(1.0, wt);
            assertArrayEquals(expected, actual, tolerance, "rotation at ωt = " + wt);
        }
    }

    @Test
    void nilpotent_matrix_gives_its_finite_series() {
        // Closed form, derived by hand: N strictly upper triangular 3×3 has N³ = 0, so
        // exp(N) = I + N + N²/2 and N² has the single entry p·r at (0, 2).
        double p = 40.0;
        double q = -7.0;
        double r = 90.0;
        double[] n3 = {0, p, q, 0, 0, r, 0, 0, 0};
        double[] expected = {1, p, q + p * r / 2, 0, 1, r, 0, 0, 1};
        double[] actual = MatrixExponential.exp(n3, 3);
        double norm = Matrices.norm1(n3, 3, 3);
        for (int i = 0; i < expected.length; i++) {
            double tolerance = CLOSED_FORM_ULPS * U * norm * Math.max(1.0, Math.abs(expected[i]));
            assertEquals(expected[i], actual[i], tolerance, "entry " + i);
        }
        assertTrue(MatrixExponential.plan(norm).squarings() >= 5, "this case should exercise squaring");
    }

    @Test
    void diagonal_matrix_gives_scalar_exponentials() {
        // Closed form: exp(diag(d)) = diag(e^d); off-diagonal entries stay exactly zero.
        double[] d = {-3.0, 0.5, 2.0, -40.0};
        int n = d.length;
        double[] a = new double[n * n];
        for (int i = 0; i < n; i++) {
            a[i * n + i] = d[i];
        }
        double[] actual = MatrixExponential.exp(a, n);
        double norm = Matrices.norm1(a, n, n);
        for (int i = 0; i < n; i++) {
            for (int j = 0; j < n; j++) {
                if (i == j) {
                    double expected = Math.exp(d[i]);
                    assertEquals(expected, actual[i * n + i], CLOSED_FORM_ULPS * U * norm * expected,
                            "diagonal " + i);
                } else {
                    assertEquals(0.0, actual[i * n + j], 0.0, "off-diagonal " + i + "," + j);
                }
            }
        }
    }

    @Test
    void scaled_scalar_gives_exp_of_product() {
        // Closed form: a 1×1 matrix [−a] at time t has exponential e^{−a t}.
        double[] actual = MatrixExponential.exp(new double[] {-1.7}, 1, 3.2);
        double expected = Math.exp(-1.7 * 3.2);
        assertEquals(expected, actual[0], CLOSED_FORM_ULPS * U * 1.7 * 3.2 * expected);
    }

    @Test
    void zero_matrix_and_zero_time_give_the_identity_exactly() {
        // Closed form: exp(0) = I, and r_3(0) = b_0 I / b_0 I is exact.
        assertArrayEquals(Matrices.identity(3), MatrixExponential.exp(new double[9], 3), 0.0);
        assertArrayEquals(Matrices.identity(2), MatrixExponential.exp(new double[] {1, 2, 3, 4}, 2, 0.0), 0.0);
    }

    @Test
    void pade_coefficients_follow_the_factorial_formula() {
        // Closed form, derived by hand from b_j ∝ (2m−j)! m! / ((2m)! j! (m−j)!) (Higham 2005, §2):
        // b_j (m − j) = b_{j+1} (j + 1)(2m − j), and the tables are scaled so that b_m = 1.
        // Checked in exact long arithmetic; every coefficient is an integer below 2^56.
        for (int k = 0; k < MatrixExponential.DEGREES.length; k++) {
            int m = MatrixExponential.DEGREES[k];
            double[] b = MatrixExponential.PADE_COEFFICIENTS[k];
            assertEquals(m + 1, b.length, "coefficient count for m = " + m);
            assertEquals(1.0, b[m], 0.0, "b_m for m = " + m);
            for (int j = 0; j < m; j++) {
                long bj = (long) b[j];
                long next = (long) b[j + 1];
                assertEquals((double) bj, b[j], 0.0, "b_" + j + " is an integer for m = " + m);
                assertEquals(next * (j + 1) * (2L * m - j), bj * (m - j), "ratio b_" + j + "/b_" + (j + 1)
                        + " for m = " + m);
            }
        }
    }

    @Test
    void plan_switches_degree_exactly_at_the_theta_thresholds() {
        // θ_m from Higham 2005, Table 2.3 (cross-read against the same constants in scipy's
        // sparse expm source, scipy/sparse/linalg/_matfuncs.py, scipy 1.17.1).
        double[] thetas = {1.495585217958292e-2, 2.539398330063230e-1, 9.504178996162932e-1,
            2.097847961257068e0, 5.371920351148152e0};
        int[] degrees = {3, 5, 7, 9, 13};
        for (int i = 0; i < thetas.length; i++) {
            assertEquals(new MatrixExponential.Plan(degrees[i], 0), MatrixExponential.plan(thetas[i]));
        }
        for (int i = 0; i < thetas.length - 1; i++) {
            assertEquals(degrees[i + 1], MatrixExponential.plan(Math.nextUp(thetas[i])).degree());
        }
        double theta13 = thetas[4];
        assertEquals(new MatrixExponential.Plan(13, 1), MatrixExponential.plan(Math.nextUp(theta13)));
        for (int s = 1; s <= 40; s++) {
            double edge = Math.scalb(theta13, s);
            assertEquals(new MatrixExponential.Plan(13, s), MatrixExponential.plan(edge), "at θ13·2^" + s);
            assertEquals(new MatrixExponential.Plan(13, s + 1), MatrixExponential.plan(Math.nextUp(edge)),
                    "just above θ13·2^" + s);
        }
    }

    @Test
    void exponential_of_negated_matrix_is_its_inverse() {
        // Property: exp(A) exp(−A) = I because A and −A commute.
        Random random = new Random(1978);
        double[] norms = {1e-3, 0.1, 0.7, 1.5, 4.0, 25.0};
        for (int trial = 0; trial < 30; trial++) {
            int n = 1 + random.nextInt(8);
            double[] a = randomWithNorm(random, n, norms[trial % norms.length]);
            double[] minusA = new double[a.length];
            for (int i = 0; i < a.length; i++) {
                minusA[i] = -a[i];
            }
            double[] f = MatrixExponential.exp(a, n);
            double[] g = MatrixExponential.exp(minusA, n);
            double[] product = Matrices.multiply(f, g, n, n, n);
            double scale = PRODUCT_ULPS * U * Math.max(1.0, Matrices.norm1(a, n, n))
                    * Matrices.norm1(f, n, n) * Matrices.norm1(g, n, n);
            assertTrue(maxAbsDifference(product, Matrices.identity(n)) <= scale,
                    "trial " + trial + " n=" + n + ": got residual " + maxAbsDifference(product, Matrices.identity(n))
                            + ", expected <= " + scale);
        }
    }

    @Test
    void exponential_turns_sums_of_times_into_products() {
        // Property: exp(A(s+t)) = exp(As) exp(At), the one-parameter group law.
        Random random = new Random(395);
        double s = 0.375;
        double t = 1.25;
        for (int trial = 0; trial < 30; trial++) {
            int n = 1 + random.nextInt(8);
            double[] a = randomWithNorm(random, n, 0.2 + 10.0 * random.nextDouble());
            double[] whole = MatrixExponential.exp(a, n, s + t);
            double[] fs = MatrixExponential.exp(a, n, s);
            double[] ft = MatrixExponential.exp(a, n, t);
            double[] product = Matrices.multiply(fs, ft, n, n, n);
            double scale = PRODUCT_ULPS * U * Math.max(1.0, (s + t) * Matrices.norm1(a, n, n))
                    * Matrices.norm1(fs, n, n) * Matrices.norm1(ft, n, n);
            double residual = maxAbsDifference(whole, product);
            assertTrue(residual <= scale, "trial " + trial + " n=" + n + ": got residual " + residual
                    + ", expected <= " + scale);
        }
    }

    @Test
    void rejects_non_finite_entries_and_wrong_shapes_before_work() {
        IllegalArgumentException nan = assertThrows(IllegalArgumentException.class,
                () -> MatrixExponential.exp(new double[] {1, Double.NaN, 0, 1}, 2));
        assertEquals("a[0][1]: got NaN, expected a finite value", nan.getMessage());
        IllegalArgumentException inf = assertThrows(IllegalArgumentException.class,
                () -> MatrixExponential.exp(new double[] {Double.NEGATIVE_INFINITY}, 1));
        assertEquals("a[0][0]: got -Infinity, expected a finite value", inf.getMessage());
        IllegalArgumentException length = assertThrows(IllegalArgumentException.class,
                () -> MatrixExponential.exp(new double[5], 2));
        assertEquals("a: got length 5, expected 2x2 = 4", length.getMessage());
        IllegalArgumentException time = assertThrows(IllegalArgumentException.class,
                () -> MatrixExponential.exp(new double[] {1}, 1, Double.POSITIVE_INFINITY));
        assertEquals("t: got Infinity, expected a finite value", time.getMessage());
        IllegalArgumentException overflow = assertThrows(IllegalArgumentException.class,
                () -> MatrixExponential.exp(new double[] {1e300}, 1, 1e10));
        assertEquals("(a*t)[0][0]: got Infinity, expected a finite value", overflow.getMessage());
        IllegalArgumentException size = assertThrows(IllegalArgumentException.class,
                () -> MatrixExponential.exp(new double[0], 0));
        assertEquals("n: got 0, expected at least 1", size.getMessage());
    }

    /** Gaussian n×n matrix rescaled to the given 1-norm. */
    static double[] randomWithNorm(Random random, int n, double norm1) {
        double[] a = new double[n * n];
        for (int i = 0; i < a.length; i++) {
            a[i] = random.nextGaussian();
        }
        double scale = norm1 / Matrices.norm1(a, n, n);
        for (int i = 0; i < a.length; i++) {
            a[i] *= scale;
        }
        return a;
    }

    static double maxAbsDifference(double[] x, double[] y) {
        double worst = 0.0;
        for (int i = 0; i < x.length; i++) {
            worst = Math.max(worst, Math.abs(x[i] - y[i]));
        }
        return worst;
    }
}
