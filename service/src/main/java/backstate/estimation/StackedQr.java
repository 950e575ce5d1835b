package backstate.estimation;

/**
 * Orthogonal triangularisation of the smoother's small stacked arrays, in place, row-major
 * ({@code m[i * width + j]}): the arrays are at most (2n + p) rows, so a strided column walk stays
 * in cache and the simple layout wins over copying to column-major.
 *
 * <p>Diagonals are made non-negative (a row of [R | z] may be negated: an orthogonal change that
 * leaves RᵀR and Rᵀz alone), so that a row folded in by {@link #foldRow} leaves exactly the
 * normalised innovation, sign included (see there).
 */
final class StackedQr {
    private StackedQr() {
    }

    /**
     * Zeroes the first {@code cols} columns of m (rows×width, rows ≥ cols) below the diagonal by
     * Householder reflections (Golub &amp; Van Loan 2013, Matrix Computations, Alg. 5.2.1), applied
     * to every column of the width; a column already zero below the diagonal is left as is.
     */
    static void triangularize(double[] m, int rows, int width, int cols) {
        triangularize(m, rows, width, cols, 0);
    }

    /**
     * As {@link #triangularize(double[], int, int, int)} when the first {@code unitRows} rows are
     * rows of the identity (row i is e_i): their columns hold nothing below the diagonal, and no
     * earlier reflection touches them, so column j &lt; unitRows is reflected against rows
     * unitRows … rows−1 only, skipping the zeros.
     */
    static void triangularize(double[] m, int rows, int width, int cols, int unitRows) {
        for (int j = 0; j < cols; j++) {
            int from = j < unitRows ? unitRows : j + 1;
            double below = 0.0;
            for (int i = from; i < rows; i++) {
                double v = m[i * width + j];
                below += v * v;
            }
            if (below > 0.0) {
                reflect(m, rows, width, j, below, from);
            }
            if (m[j * width + j] < 0.0) {
                for (int c = j; c < width; c++) {
                    m[j * width + c] = -m[j * width + c];
                }
            }
        }
    }

    /** One reflection H = I − v vᵀ/(α v0) with v = [x_j − α; x_{j+1…}], α = −sign(x_j)‖x‖. */
    private static void reflect(double[] m, int rows, int width, int j, double below, int from) {
        double head = m[j * width + j];
        double alpha = -Math.copySign(Math.sqrt(head * head + below), head);
        double v0 = head - alpha;
        double beta = 1.0 / (alpha * v0);
        for (int c = j + 1; c < width; c++) {
            double s = v0 * m[j * width + c];
            for (int i = from; i < rows; i++) {
                s += m[i * width + j] * m[i * width + c];
            }
            s *= beta;
            m[j * width + c] += s * v0;
            for (int i = from; i < rows; i++) {
                m[i * width + c] += s * m[i * width + j];
            }
        }
        m[j * width + j] = alpha;
        for (int i = from; i < rows; i++) {
            m[i * width + j] = 0.0;
        }
    }

    /**
     * Folds one row a (width entries: s coefficients, then right-hand sides) into the upper-triangular
     * [R | z] (s rows × width, diagonal ≥ 0) by Givens rotations with c ≥ 0 (Golub &amp; Van Loan
     * 2013, §5.1.8; Bierman 1977, ch. V). Afterwards a's first s entries are zero and a[s] is what
     * the row adds to the residual: when R has full rank, (b − h x̂)/√(1 + h P hᵀ) with x̂ = R⁻¹z and
     * P = R⁻¹R⁻ᵀ, the normalised innovation. (Both are affine in b with the same magnitude; the
     * rotations multiply b by Π c_j &gt; 0, so the signs agree too.)
     */
    static void foldRow(double[] r, int s, int width, double[] a) {
        for (int j = 0; j < s; j++) {
            double aj = a[j];
            if (aj == 0.0) {
                continue;
            }
            double rjj = r[j * width + j];
            double h = Math.sqrt(rjj * rjj + aj * aj);
            double c = rjj / h;
            double sn = aj / h;
            r[j * width + j] = h;
            a[j] = 0.0;
            for (int l = j + 1; l < width; l++) {
                double rl = r[j * width + l];
                double al = a[l];
                r[j * width + l] = c * rl + sn * al;
                a[l] = c * al - sn * rl;
            }
        }
    }
}
