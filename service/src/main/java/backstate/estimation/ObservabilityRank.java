package backstate.estimation;

import java.util.ArrayList;
import java.util.List;
import org.apache.commons.math3.linear.MatrixUtils;
import org.apache.commons.math3.linear.SingularValueDecomposition;

/**
 * Observability of the pair (A, C) by the rank of O = [C; CÂ; …; CÂ^{n−1}] (Kalman 1960 rank test),
 * with Â = A/‖A‖₁: scaling A by a positive scalar leaves the rank unchanged and keeps the powers
 * from overflowing or vanishing for stiff models. Rank and null space come from the SVD of O.
 */
public final class ObservabilityRank {
    private ObservabilityRank() {
    }

    /**
     * @param rank           numerical rank of O
     * @param singularValues singular values of O, descending
     * @param tolerance      s_max · max(rows, n) · eps (numpy matrix_rank convention)
     * @param unobservable   unit vectors spanning the unobservable subspace
     */
    public record Report(int rank, int states, double[] singularValues, double tolerance, List<double[]> unobservable) {
        public boolean observable() {
            return rank == states;
        }
    }

    public static Report of(StateSpaceModel model) {
        int n = model.states();
        int p = model.outputs();
        double[] a = model.a();
        double norm = Matrices.norm1(a, n, n);
        if (norm > 0.0) {
            for (int i = 0; i < a.length; i++) {
                a[i] /= norm;
            }
        }
        double[][] stacked = new double[n * p][];
        double[] block = model.c();
        for (int power = 0; power < n; power++) {
            for (int j = 0; j < p; j++) {
                stacked[power * p + j] = Matrices.block(block, n, j, 0, 1, n);
            }
            block = Matrices.multiply(block, a, p, n, n);
        }
        SingularValueDecomposition svd = new SingularValueDecomposition(MatrixUtils.createRealMatrix(stacked));
        double[] s = svd.getSingularValues();
        double tolerance = s[0] * Math.max(n * p, n) * ConditioningAnalysis.EPS;
        int rank = 0;
        for (double v : s) {
            if (v > tolerance) {
                rank++;
            }
        }
        List<double[]> nullSpace = new ArrayList<>();
        for (int i = rank; i < n; i++) {
            nullSpace.add(ConditioningAnalysis.canonicalSign(svd.getV().getColumn(i)));
        }
        return new Report(rank, n, s, tolerance, nullSpace);
    }
}
