package backstate.estimation;

/**
 * Householder QR of a tall matrix held column-major, keeping the reflectors so that Qᵀ can be
 * applied to many right-hand sides later (Golub &amp; Van Loan 2013, Matrix Computations, Alg. 5.2.1).
 *
 * <p>Layout: column-major rows×cols ({@code a[c * rows + r]}), so each reflector and each column
 * it updates are contiguous. A zero column is left as is (its reflector is the identity), so a
 * rank-deficient matrix still factors exactly and Qᵀ stays orthogonal.
 */
final class HouseholderQr {
    private final int rows;
    private final int cols;
    private final double[] reflectors;
    private final double[] betas;
    private final double[] r;

    /** Factors a (rows×cols column-major, rows ≥ cols); a is copied. */
    HouseholderQr(double[] a, int rows, int cols) {
        this.rows = rows;
        this.cols = cols;
        this.reflectors = a.clone();
        this.betas = new double[cols];
        this.r = new double[cols * cols];
        for (int j = 0; j < cols; j++) {
            reflect(j);
        }
    }

    /** R, cols×cols row-major upper triangular: the factor's own array, which callers must not write. */
    double[] r() {
        return r;
    }

    /**
     * Overwrites b (rows) with Qᵀb: the first cols entries pair with R, and the squared norm of the
     * rest is the residual of the least-squares fit, computed without cancellation.
     */
    void applyTranspose(double[] b) {
        for (int j = 0; j < cols; j++) {
            double beta = betas[j];
            if (beta == 0.0) {
                continue;
            }
            int col = j * rows;
            double s = beta * Matrices.dot(reflectors, col + j, b, j, rows - j);
            for (int i = j; i < rows; i++) {
                b[i] -= s * reflectors[col + i];
            }
        }
    }

    /**
     * The first cols columns of Q, Q₁ (rows×cols column-major, Q₁ᵀQ₁ = I and A = Q₁R), formed by
     * applying the reflectors in reverse order to the unit vectors (backward accumulation, Golub
     * &amp; Van Loan 2013, §5.1.6).
     */
    double[] thinQ() {
        double[] q = new double[rows * cols];
        for (int c = 0; c < cols; c++) {
            int column = c * rows;
            q[column + c] = 1.0;
            for (int j = c; j >= 0; j--) {
                double beta = betas[j];
                if (beta == 0.0) {
                    continue;
                }
                int col = j * rows;
                double s = beta * Matrices.dot(reflectors, col + j, q, column + j, rows - j);
                for (int i = j; i < rows; i++) {
                    q[column + i] -= s * reflectors[col + i];
                }
            }
        }
        return q;
    }

    /** Builds reflector j from column j below the diagonal and applies it to the columns after it. */
    private void reflect(int j) {
        int col = j * rows;
        double norm2 = 0.0;
        for (int i = j; i < rows; i++) {
            norm2 += reflectors[col + i] * reflectors[col + i];
        }
        if (norm2 == 0.0) {
            betas[j] = 0.0;
            copyRow(j, 0.0);
            return;
        }
        double head = reflectors[col + j];
        double alpha = -Math.copySign(Math.sqrt(norm2), head);
        reflectors[col + j] = head - alpha;
        double vNorm2 = norm2 - head * head + (head - alpha) * (head - alpha);
        betas[j] = 2.0 / vNorm2;
        for (int c = j + 1; c < cols; c++) {
            int other = c * rows;
            double s = 0.0;
            for (int i = j; i < rows; i++) {
                s += reflectors[col + i] * reflectors[other + i];
            }
            s *= betas[j];
            for (int i = j; i < rows; i++) {
                reflectors[other + i] -= s * reflectors[col + i];
            }
        }
        copyRow(j, alpha);
    }

    /** Row j of R: alpha on the diagonal, then the updated entries of the later columns. */
    private void copyRow(int j, double diagonal) {
        r[j * cols + j] = diagonal == 0.0 ? reflectors[j * rows + j] : diagonal;
        for (int c = j + 1; c < cols; c++) {
            r[j * cols + c] = reflectors[c * rows + j];
        }
    }
}
