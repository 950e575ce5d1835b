package backstate.estimation;

import backstate.text.Counted;

import org.apache.commons.math3.linear.CholeskyDecomposition;
import org.apache.commons.math3.linear.MatrixUtils;
import org.apache.commons.math3.linear.NonPositiveDefiniteMatrixException;
import org.apache.commons.math3.linear.NonSymmetricMatrixException;

/**
 * A Gaussian prior x0 ~ N(μ, P0) as n whitened pseudo-equations L⁻¹ x0 = L⁻¹ μ with P0 = L Lᵀ
 * (Cholesky), appended to the square-root information (Bierman 1977, ch. V, a priori information).
 */
final class PriorEquations {
    /** Symmetry tolerance relative to the largest entry, and the smallest pivot accepted (Commons Math's Cholesky thresholds). */
    static final double SYMMETRY_TOLERANCE = 1e-10;
    static final double PIVOT_TOLERANCE = 1e-14;

    private PriorEquations() {
    }

    static void validate(Prior prior, int n) {
        if (prior.mean() == null || prior.mean().length != n) {
            throw new ModelException("prior.mean", "got " + Counted.of(prior.mean() == null ? 0 : prior.mean().length,
                    "value") + ", expected " + n);
        }
        if (prior.covariance() == null || prior.covariance().length != n * n) {
            throw new ModelException("prior.covariance", "got "
                    + Counted.of(prior.covariance() == null ? 0 : prior.covariance().length, "value") + ", expected " + n + "×" + n);
        }
        for (int i = 0; i < n; i++) {
            requireFinite("prior.mean[" + i + "]", prior.mean()[i]);
        }
        for (int i = 0; i < n * n; i++) {
            requireFinite("prior.covariance[" + i / n + "][" + i % n + "]", prior.covariance()[i]);
        }
        lowerFactor(prior, n);
    }

    static void add(SquareRootInformation info, Prior prior, int n) {
        double[] whitening = Triangular.invertLower(lowerFactor(prior, n), n);
        double[] row = new double[info.unknowns()];
        for (int i = 0; i < n; i++) {
            double rhs = 0.0;
            for (int j = 0; j < n; j++) {
                row[j] = whitening[i * n + j];
                rhs += whitening[i * n + j] * prior.mean()[j];
            }
            info.add(row, rhs);
        }
    }

    /** Σ_i (L⁻¹(μ − x))_i²: the pseudo-equations' residual sum of squares at the unknowns' value x (the first n used). */
    static double residualSquares(Prior prior, int n, double[] x) {
        double[] whitening = Triangular.invertLower(lowerFactor(prior, n), n);
        double sum = 0.0;
        for (int i = 0; i < n; i++) {
            double r = 0.0;
            for (int j = 0; j <= i; j++) {
                r += whitening[i * n + j] * (prior.mean()[j] - x[j]);
            }
            sum += r * r;
        }
        return sum;
    }

    private static double[] lowerFactor(Prior prior, int n) {
        try {
            CholeskyDecomposition cholesky = new CholeskyDecomposition(
                    MatrixUtils.createRealMatrix(Matrices.unflatten(prior.covariance(), n, n)),
                    SYMMETRY_TOLERANCE, PIVOT_TOLERANCE);
            return Matrices.flatten(cholesky.getL().getData(), n, n);
        } catch (NonSymmetricMatrixException e) {
            throw new ModelException("prior.covariance", "got a non-symmetric matrix, expected a symmetric one");
        } catch (NonPositiveDefiniteMatrixException e) {
            throw new ModelException("prior.covariance", "got a matrix that is not positive definite, expected one that is");
        }
    }

    private static void requireFinite(String field, double v) {
        if (!Double.isFinite(v)) {
            throw new ModelException(field, "got " + v + ", expected a finite number");
        }
    }
}
