package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Arrays;
import java.util.Random;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.QRDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.junit.jupiter.api.Test;

/**
 * {@link HouseholderQr} checked directly by the properties a Householder QR must have: A = QR and
 * QᵀQ = I to rounding, R upper triangular, Qᵀ applied to A's columns giving [R; 0], the thin Q₁
 * equal to Q's first columns, on random,
 * square, tall, rank-deficient and badly column-scaled matrices. Q is formed by applying Qᵀ to
 * the unit vectors (Qᵀe_i is row i of Q).
 *
 * <p>Bounds: Householder QR is backward stable, the computed R being the exact factor of A + E
 * with ‖E‖ ≤ c·m·n·u·‖A‖ (Golub &amp; Van Loan 2013, Matrix Computations, 4th ed., §5.2; the
 * constant c, a small number, from memory), and this holds column by column, ‖e_j‖ ≤ c·m·n·u·‖a_j‖,
 * when there is no pivoting (Higham 2002, Accuracy and Stability of Numerical Algorithms, 2nd ed.,
 * Thm 19.4, from memory). Forming Q by the same reflectors adds an error of the same order, so
 * every check allows {@link #C}·m·n·u, u = 2⁻⁵³.
 */
class HouseholderQrTest {
    /** Unit roundoff of IEEE double. */
    private static final double U = 0x1.0p-53;
    /**
     * The constant of the backward-error bound, taken generously: a factor and the Q formed from it
     * each contribute about one m·n·u; 10 leaves room and still fails on any wrong reflector,
     * which leaves errors of the size of ‖A‖ itself. Observed: 0.002 to 0.3 m·n·u for QR − A, up to
     * 0.8 m·n·u for QᵀQ − I (the 3×1 case, where m·n is smallest).
     */
    private static final double C = 10;

    @Test
    void a_random_matrix_factors_exactly_to_rounding() {
        check(random(8, 5, 1L), 8, 5);
    }

    @Test
    void a_square_matrix_factors_exactly_to_rounding() {
        check(random(6, 6, 2L), 6, 6);
    }

    @Test
    void a_tall_matrix_factors_exactly_to_rounding() {
        check(random(400, 6, 3L), 400, 6);
    }

    @Test
    void a_single_column_is_its_norm_times_a_unit_vector() {
        double[] a = {3, 0, 4};
        HouseholderQr qr = new HouseholderQr(a, 3, 1);
        // Closed form: ‖(3, 0, 4)‖ = 5, with the sign opposite the first entry's (Alg. 5.1.1's choice).
        assertEquals(-5.0, qr.r()[0], 5 * U);
        check(a, 3, 1);
    }

    @Test
    void a_rank_deficient_matrix_still_factors_and_shows_its_dependent_column_on_the_diagonal() {
        int m = 40;
        int n = 5;
        double[] a = random(m, n, 4L);
        // Column 3 = column 0 + 2·column 1: rank 4, and R's diagonal entry for column 3 is zero in
        // exact arithmetic (the part of a_3 orthogonal to a_0, a_1, a_2), rounding only here.
        for (int i = 0; i < m; i++) {
            a[3 * m + i] = a[i] + 2 * a[m + i];
        }
        HouseholderQr qr = check(a, m, n);
        double allowed = C * m * n * U * frobenius(a, m, n);
        assertTrue(Math.abs(qr.r()[3 * n + 3]) <= allowed, "R[3][3] = " + qr.r()[3 * n + 3] + ", allowed " + allowed);
        for (int j : new int[] {0, 1, 2, 4}) {
            assertTrue(Math.abs(qr.r()[j * n + j]) > 0.1, "independent column " + j + ": R[j][j] = " + qr.r()[j * n + j]);
        }
    }

    @Test
    void a_zero_column_leaves_an_exact_zero_on_the_diagonal_and_q_orthogonal() {
        int m = 7;
        int n = 3;
        double[] a = random(m, n, 5L);
        Arrays.fill(a, m, 2 * m, 0.0);
        HouseholderQr qr = check(a, m, n);
        assertEquals(0.0, qr.r()[n + 1], "the reflector of a zero column is the identity");
    }

    @Test
    void badly_scaled_columns_factor_column_by_column_to_rounding() {
        int m = 30;
        double[] scales = {1e-8, 1e8, 1e-4, 1.0, 1e4};
        int n = scales.length;
        double[] a = random(m, n, 6L);
        for (int j = 0; j < n; j++) {
            for (int i = 0; i < m; i++) {
                a[j * m + i] *= scales[j];
            }
        }
        HouseholderQr qr = check(a, m, n);
        // Column by column: a normwise bound would let the 1e-8 column be lost under the 1e8 one.
        double[] q = formQ(qr, m);
        double[] product = times(q, qr.r(), m, n);
        for (int j = 0; j < n; j++) {
            double error = 0;
            double norm = 0;
            for (int i = 0; i < m; i++) {
                double d = product[i * n + j] - a[j * m + i];
                error += d * d;
                norm += a[j * m + i] * a[j * m + i];
            }
            double allowed = C * m * n * U * Math.sqrt(norm);
            assertTrue(Math.sqrt(error) <= allowed, "column " + j + " (scale " + scales[j] + "): ‖QR − A‖ = "
                    + Math.sqrt(error) + ", allowed " + allowed);
        }
    }

    @Test
    void the_diagonal_of_r_matches_commons_math_up_to_sign() {
        // Commons Math's QRDecomposition (Householder too) as an outside reference: R is unique up
        // to the signs of its rows for a full-rank A, so |R| must agree to rounding.
        int m = 50;
        int n = 6;
        double[] a = random(m, n, 7L);
        HouseholderQr qr = new HouseholderQr(a, m, n);
        RealMatrix reference = new QRDecomposition(new Array2DRowRealMatrix(rows(a, m, n))).getR();
        double allowed = C * m * n * U * frobenius(a, m, n);
        for (int i = 0; i < n; i++) {
            double sign = Math.signum(qr.r()[i * n + i]) * Math.signum(reference.getEntry(i, i));
            for (int j = i; j < n; j++) {
                assertEquals(reference.getEntry(i, j), sign * qr.r()[i * n + j], allowed, "R[" + i + "][" + j + "]");
            }
        }
    }

    /** Checks QR = A, QᵀQ = I, R upper triangular and QᵀA = [R; 0]; returns the factor. */
    private static HouseholderQr check(double[] a, int m, int n) {
        double[] original = a.clone();
        HouseholderQr qr = new HouseholderQr(a, m, n);
        assertEquals(Arrays.toString(original), Arrays.toString(a), "A is copied, not overwritten");
        double[] r = qr.r();
        for (int i = 0; i < n; i++) {
            for (int j = 0; j < i; j++) {
                assertEquals(0.0, r[i * n + j], "R below the diagonal");
            }
        }
        double normA = frobenius(a, m, n);
        double[] q = formQ(qr, m);
        double[] product = times(q, r, m, n);
        double residual = 0;
        for (int i = 0; i < m; i++) {
            for (int j = 0; j < n; j++) {
                double d = product[i * n + j] - a[j * m + i];
                residual += d * d;
            }
        }
        double allowed = C * m * n * U;
        assertTrue(Math.sqrt(residual) <= allowed * normA, "‖QR − A‖_F = " + Math.sqrt(residual) + ", allowed "
                + allowed * normA);

        double orthogonality = 0;
        for (int i = 0; i < m; i++) {
            for (int j = 0; j < m; j++) {
                double s = 0;
                for (int k = 0; k < m; k++) {
                    s += q[k * m + i] * q[k * m + j];
                }
                double d = s - (i == j ? 1 : 0);
                orthogonality += d * d;
            }
        }
        assertTrue(Math.sqrt(orthogonality) <= allowed, "‖QᵀQ − I‖_F = " + Math.sqrt(orthogonality) + ", allowed " + allowed);

        // Q₁ by backward accumulation (thinQ, column-major) is the first n columns of the Q that Qᵀ
        // applied to the unit vectors forms: the same reflectors in the other order.
        double[] thin = qr.thinQ();
        for (int i = 0; i < m; i++) {
            for (int j = 0; j < n; j++) {
                assertEquals(q[i * m + j], thin[j * m + i], allowed, "Q₁[" + i + "][" + j + "]");
            }
        }

        for (int j = 0; j < n; j++) {
            double[] column = Arrays.copyOfRange(a, j * m, (j + 1) * m);
            qr.applyTranspose(column);
            for (int i = 0; i < m; i++) {
                double expected = i < n ? r[i * n + j] : 0.0;
                assertEquals(expected, column[i], allowed * normA, "Qᵀa_" + j + " entry " + i);
            }
        }
        return qr;
    }

    /** Q, m×m row-major, row i being Qᵀe_i. */
    private static double[] formQ(HouseholderQr qr, int m) {
        double[] q = new double[m * m];
        for (int i = 0; i < m; i++) {
            double[] e = new double[m];
            e[i] = 1;
            qr.applyTranspose(e);
            System.arraycopy(e, 0, q, i * m, m);
        }
        return q;
    }

    /** Q's first n columns times R: m×n row-major. */
    private static double[] times(double[] q, double[] r, int m, int n) {
        double[] out = new double[m * n];
        for (int i = 0; i < m; i++) {
            for (int j = 0; j < n; j++) {
                double s = 0;
                for (int k = 0; k <= j; k++) {
                    s += q[i * m + k] * r[k * n + j];
                }
                out[i * n + j] = s;
            }
        }
        return out;
    }

    /** Column-major m×n with standard normal entries. */
    private static double[] random(int m, int n, long seed) {
        Random random = new Random(seed);
        double[] a = new double[m * n];
        for (int i = 0; i < a.length; i++) {
            a[i] = random.nextGaussian();
        }
        return a;
    }

    private static double frobenius(double[] a, int m, int n) {
        double s = 0;
        for (int i = 0; i < m * n; i++) {
            s += a[i] * a[i];
        }
        return Math.sqrt(s);
    }

    private static double[][] rows(double[] a, int m, int n) {
        double[][] out = new double[m][n];
        for (int i = 0; i < m; i++) {
            for (int j = 0; j < n; j++) {
                out[i][j] = a[j * m + i];
            }
        }
        return out;
    }
}
