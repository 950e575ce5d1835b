package backstate.estimation;

/** Substitution with triangular factors (Golub &amp; Van Loan 2013, Matrix Computations, §3.1). */
final class Triangular {
    private Triangular() {
    }

    /** Solves R x = z for upper-triangular q×q R (row-major) by back substitution. */
    static double[] solveUpper(double[] r, double[] z, int q) {
        double[] x = new double[q];
        for (int i = q - 1; i >= 0; i--) {
            double s = z[i];
            for (int j = i + 1; j < q; j++) {
                s -= r[i * q + j] * x[j];
            }
            x[i] = s / r[i * q + i];
        }
        return x;
    }

    /** Returns R⁻¹ of an upper-triangular q×q R, column by column by back substitution. */
    static double[] invertUpper(double[] r, int q) {
        double[] inv = new double[q * q];
        double[] unit = new double[q];
        for (int c = 0; c < q; c++) {
            java.util.Arrays.fill(unit, 0.0);
            unit[c] = 1.0;
            double[] col = solveUpper(r, unit, q);
            for (int i = 0; i < q; i++) {
                inv[i * q + c] = col[i];
            }
        }
        return inv;
    }

    /** Returns L⁻¹ of a lower-triangular n×n L by forward substitution. */
    static double[] invertLower(double[] l, int n) {
        double[] inv = new double[n * n];
        for (int c = 0; c < n; c++) {
            for (int i = c; i < n; i++) {
                double s = i == c ? 1.0 : 0.0;
                for (int j = c; j < i; j++) {
                    s -= l[i * n + j] * inv[j * n + c];
                }
                inv[i * n + c] = s / l[i * n + i];
            }
        }
        return inv;
    }

    /** Returns U Uᵀ for a q×q upper-triangular U (the covariance from R⁻¹), exactly symmetric. */
    static double[] timesOwnTranspose(double[] u, int q) {
        double[] out = new double[q * q];
        for (int i = 0; i < q; i++) {
            for (int j = i; j < q; j++) {
                double s = 0.0;
                for (int k = j; k < q; k++) {
                    s += u[i * q + k] * u[j * q + k];
                }
                out[i * q + j] = s;
                out[j * q + i] = s;
            }
        }
        return out;
    }
}
