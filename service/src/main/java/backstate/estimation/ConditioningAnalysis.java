package backstate.estimation;

import java.util.ArrayList;
import java.util.List;
import org.apache.commons.math3.linear.MatrixUtils;
import org.apache.commons.math3.linear.RealMatrix;
import org.apache.commons.math3.linear.SingularValueDecomposition;

/**
 * Eigen-structure of the information matrix W = RᵀR read off the SVD of its square-root factor R:
 * eigenvalues are the squared singular values and eigenvectors the right singular vectors, so W
 * is never formed to be decomposed (Golub &amp; Van Loan 2013, Matrix Computations, §8.6.1).
 */
final class ConditioningAnalysis {
    /** Machine epsilon of IEEE double. */
    static final double EPS = Math.ulp(1.0);

    private final int q;
    private final double[] singularValues;
    private final RealMatrix rightVectors;
    private final double tolerance;
    private final int rank;

    /**
     * @param r         q×q upper-triangular square-root factor, row-major
     * @param equations rows behind R; the rank tolerance s_max · max(rows, q) · eps is the one numpy's
     *                  matrix_rank applies to the stacked matrix (Press et al. 2007, Numerical Recipes §2.6)
     */
    ConditioningAnalysis(double[] r, int q, long equations) {
        this.q = q;
        SingularValueDecomposition svd = new SingularValueDecomposition(
                MatrixUtils.createRealMatrix(Matrices.unflatten(r, q, q)));
        this.singularValues = svd.getSingularValues();
        this.rightVectors = svd.getV();
        this.tolerance = singularValues[0] * Math.max(equations, q) * EPS;
        int count = 0;
        for (double s : singularValues) {
            if (s > tolerance) {
                count++;
            }
        }
        this.rank = count;
    }

    int rank() {
        return rank;
    }

    double tolerance() {
        return tolerance;
    }

    /** Singular values of R, descending. */
    double[] singularValues() {
        return singularValues.clone();
    }

    /** Unit vectors spanning the numerical null space of R. */
    List<double[]> nullDirections() {
        List<double[]> out = new ArrayList<>();
        for (int i = rank; i < q; i++) {
            out.add(canonicalSign(rightVectors.getColumn(i)));
        }
        return out;
    }

    /** Summary with W, ascending eigenvalues, κ, the weakest direction and the σ achievable along it. */
    Conditioning summary(double[] r, int dataRank) {
        double[] w = Matrices.multiply(Matrices.transpose(r, q, q), r, q, q, q);
        double[] eigenvalues = new double[q];
        for (int i = 0; i < q; i++) {
            double s = singularValues[q - 1 - i];
            eigenvalues[i] = s * s;
        }
        double smallest = singularValues[q - 1];
        double largest = singularValues[0];
        double kappa = smallest > 0.0 ? (largest / smallest) * (largest / smallest) : Double.POSITIVE_INFINITY;
        double weakestStd = smallest > 0.0 ? 1.0 / smallest : Double.POSITIVE_INFINITY;
        return new Conditioning(w, eigenvalues, kappa, rank, tolerance,
                canonicalSign(rightVectors.getColumn(q - 1)), weakestStd, dataRank);
    }

    /** Flips a direction so its largest-magnitude entry is positive, making reports reproducible. */
    static double[] canonicalSign(double[] v) {
        int biggest = 0;
        for (int i = 1; i < v.length; i++) {
            if (Math.abs(v[i]) > Math.abs(v[biggest])) {
                biggest = i;
            }
        }
        if (v[biggest] < 0) {
            for (int i = 0; i < v.length; i++) {
                v[i] = -v[i];
            }
        }
        return v;
    }
}
