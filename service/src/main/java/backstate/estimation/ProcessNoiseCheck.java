package backstate.estimation;

import backstate.text.Counted;

import org.apache.commons.math3.linear.EigenDecomposition;
import org.apache.commons.math3.linear.MatrixUtils;

/**
 * Checks a declared process-noise matrix: n×n, finite, symmetric and positive semi-definite. A
 * singular matrix (noise on some states only) is valid.
 */
final class ProcessNoiseCheck {
    /** Symmetry tolerance relative to the largest entry: the prior's ({@link PriorEquations#SYMMETRY_TOLERANCE}). */
    static final double SYMMETRY_TOLERANCE = PriorEquations.SYMMETRY_TOLERANCE;
    /**
     * An eigenvalue below −n·1e-12·λ_max is negative beyond what rounding of a written-out PSD
     * matrix (about 12 significant digits) explains (common practice, no source).
     */
    static final double NEGATIVE_EIGENVALUE_TOLERANCE = 1e-12;

    private ProcessNoiseCheck() {
    }

    /** The matrix row-major, or a {@link ModelException} naming {@code field[i][j]} or the whole field. */
    static double[] validated(double[][] q, int n, String field) {
        if (q == null || q.length != n) {
            throw new ModelException(field, "got " + Counted.of(q == null ? 0 : q.length, "row") + ", expected " + n);
        }
        double largest = 0.0;
        for (int i = 0; i < n; i++) {
            if (q[i] == null || q[i].length != n) {
                throw new ModelException(field + "[" + i + "]", "got " + Counted.of(q[i] == null ? 0 : q[i].length, "value")
                        + ", expected " + n);
            }
            for (int j = 0; j < n; j++) {
                if (!Double.isFinite(q[i][j])) {
                    throw new ModelException(field + "[" + i + "][" + j + "]", "got " + q[i][j] + ", expected a finite number");
                }
                largest = Math.max(largest, Math.abs(q[i][j]));
            }
        }
        for (int i = 0; i < n; i++) {
            for (int j = i + 1; j < n; j++) {
                if (Math.abs(q[i][j] - q[j][i]) > SYMMETRY_TOLERANCE * largest) {
                    throw new ModelException(field + "[" + i + "][" + j + "]", "got " + q[i][j] + " against "
                            + q[j][i] + " at [" + j + "][" + i + "], expected a symmetric matrix");
                }
            }
        }
        requireSemiDefinite(q, n, largest, field);
        return Matrices.flatten(q, n, n);
    }

    private static void requireSemiDefinite(double[][] q, int n, double largest, String field) {
        if (largest == 0.0) {
            return;
        }
        double[] values = new EigenDecomposition(MatrixUtils.createRealMatrix(q)).getRealEigenvalues();
        double top = 0.0;
        double bottom = 0.0;
        for (double v : values) {
            top = Math.max(top, v);
            bottom = Math.min(bottom, v);
        }
        if (bottom < -n * NEGATIVE_EIGENVALUE_TOLERANCE * top) {
            throw new ModelException(field, "got a matrix with eigenvalue " + bottom
                    + ", expected a positive semi-definite one (all eigenvalues ≥ 0)");
        }
    }
}
