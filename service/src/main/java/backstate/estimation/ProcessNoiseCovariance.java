package backstate.estimation;

import org.apache.commons.math3.linear.EigenDecomposition;
import org.apache.commons.math3.linear.MatrixUtils;

/**
 * Per-interval process-noise covariance and its square-root factor.
 *
 * <p>Continuous time (dx = A x dt + dw, E[dw dwᵀ] = Q_c dt): Q_d(h) = ∫₀ʰ e^{Aτ} Q_c e^{Aᵀτ} dτ, read
 * off the block exponential exp([[−A, Q_c], [0, Aᵀ]]·h) = [[·, F12], [0, F22]] as Q_d = F22ᵀ F12
 * (C. F. Van Loan, "Computing integrals involving the matrix exponential", IEEE Trans. Automat.
 * Control 23(3):395–404, 1978, Theorem 1). The block's upper-left corner is e^{−Ah}, which
 * overflows for a fast stable mode over a long step, so the block is taken over h/2^s with
 * ‖A‖₁·h/2^s ≤ {@link #VAN_LOAN_NORM} and the interval doubled s times by
 * Q(2t) = Q(t) + Φ(t) Q(t) Φ(t)ᵀ (the semigroup property of the integral): a sum of PSD terms, so
 * doubling loses nothing to cancellation.
 *
 * <p>Discrete time (x_{k+1} = A x_k + B u_k + w_k, Cov w_k = Q per period): over s periods
 * Q_s = Σ_{i&lt;s} A^i Q A^{iᵀ}, by binary powering of the pair (Φ, Q) with the same composition rule
 * (Knuth, TAOCP vol. 2, §4.6.3, Algorithm A).
 *
 * <p>Layout: n×n row-major, as {@link Matrices}. Results are symmetrised.
 */
public final class ProcessNoiseCovariance {
    /**
     * ‖A‖₁·t at which the Van Loan block is evaluated: e^{‖A‖ t} ≤ e, so the e^{−At} corner is
     * harmless and the integral's scale is resolved to full precision (common practice, no source).
     */
    static final double VAN_LOAN_NORM = 1.0;

    private ProcessNoiseCovariance() {
    }

    /** A square-root factor G (n×rank, row-major) with G Gᵀ = Q_d, over the rank positive eigenvalues. */
    public record Factor(double[] g, int rank) {
    }

    /**
     * Q_d(h) for dx/dt = A x + w, spectral density Q_c.
     * Method: Van Loan 1978 (IEEE Trans. Automat. Control 23(3)), Theorem 1, with interval doubling.
     */
    public static double[] continuous(double[] a, double[] qc, int n, double h) {
        LinearSystemArguments.requireMatrix("a", a, n, n);
        LinearSystemArguments.requireMatrix("processNoise", qc, n, n);
        LinearSystemArguments.requirePositive("h", h);
        double norm = Matrices.norm1(a, n, n) * h;
        int doublings = 0;
        while (norm > VAN_LOAN_NORM && doublings < Math.getExponent(Double.MAX_VALUE)) {
            norm /= 2.0;
            doublings++;
        }
        double t = Math.scalb(h, -doublings);
        int size = 2 * n;
        double[] block = new double[size * size];
        for (int i = 0; i < n; i++) {
            for (int j = 0; j < n; j++) {
                block[i * size + j] = -a[i * n + j];
                block[i * size + n + j] = qc[i * n + j];
                block[(n + i) * size + n + j] = a[j * n + i];
            }
        }
        double[] f = MatrixExponential.expBlockUpper(block, size, n, t);
        double[] phi = Matrices.transpose(Matrices.block(f, size, n, n, n, n), n, n);
        double[] q = symmetric(Matrices.multiply(phi, Matrices.block(f, size, 0, n, n, n), n, n, n), n);
        for (int s = 0; s < doublings; s++) {
            q = compose(q, phi, q, n);
            phi = Matrices.multiply(phi, phi, n, n, n);
        }
        return q;
    }

    /** Q over {@code steps} periods of x ← A x + w, Cov w = q: Σ_{i&lt;steps} A^i q A^{iᵀ}, by binary powering. */
    public static double[] discrete(double[] a, double[] q, int n, long steps) {
        LinearSystemArguments.requireMatrix("a", a, n, n);
        LinearSystemArguments.requireMatrix("processNoise", q, n, n);
        if (steps < 1) {
            throw new IllegalArgumentException("steps: got " + steps + ", expected 1 or more");
        }
        double[] basePhi = a.clone();
        double[] baseQ = symmetric(q.clone(), n);
        double[] phi = null;
        double[] cov = null;
        long remaining = steps;
        while (true) {
            if ((remaining & 1) != 0) {
                if (phi == null) {
                    phi = basePhi.clone();
                    cov = baseQ.clone();
                } else {
                    cov = compose(cov, basePhi, baseQ, n);
                    phi = Matrices.multiply(basePhi, phi, n, n, n);
                }
            }
            remaining >>>= 1;
            if (remaining == 0) {
                return cov;
            }
            baseQ = compose(baseQ, basePhi, baseQ, n);
            basePhi = Matrices.multiply(basePhi, basePhi, n, n, n);
        }
    }

    /** Covariance of an interval with covariance Q1 followed by one with (Φ2, Q2): Φ2 Q1 Φ2ᵀ + Q2. */
    private static double[] compose(double[] q1, double[] phi2, double[] q2, int n) {
        double[] out = Matrices.multiply(Matrices.multiply(phi2, q1, n, n, n), Matrices.transpose(phi2, n, n), n, n, n);
        for (int i = 0; i < out.length; i++) {
            out[i] += q2[i];
        }
        return symmetric(out, n);
    }

    /**
     * G with G Gᵀ = Q over the eigenvalues above n·ε·λ_max (the symmetric eigen-decomposition,
     * Golub &amp; Van Loan 2013, Matrix Computations, §8.1): columns √λ_i v_i. Rounding makes the
     * zero eigenvalues of a singular Q tiny of either sign; dropping them changes Q by at most that
     * tolerance, and leaves noise-free directions out of G altogether.
     */
    public static Factor factor(double[] q, int n) {
        double largest = 0.0;
        for (double v : q) {
            largest = Math.max(largest, Math.abs(v));
        }
        if (largest == 0.0) {
            return new Factor(new double[0], 0);
        }
        EigenDecomposition eigen = new EigenDecomposition(MatrixUtils.createRealMatrix(Matrices.unflatten(q, n, n)));
        double[] values = eigen.getRealEigenvalues();
        double top = 0.0;
        for (double v : values) {
            top = Math.max(top, v);
        }
        double tolerance = top * n * ConditioningAnalysis.EPS;
        int rank = 0;
        for (double v : values) {
            if (v > tolerance) {
                rank++;
            }
        }
        double[] g = new double[n * rank];
        int column = 0;
        for (int i = 0; i < values.length; i++) {
            if (values[i] > tolerance) {
                double root = Math.sqrt(values[i]);
                double[] v = eigen.getEigenvector(i).toArray();
                for (int r = 0; r < n; r++) {
                    g[r * rank + column] = root * v[r];
                }
                column++;
            }
        }
        return new Factor(g, rank);
    }

    private static double[] symmetric(double[] m, int n) {
        for (int i = 0; i < n; i++) {
            for (int j = i + 1; j < n; j++) {
                double mean = 0.5 * (m[i * n + j] + m[j * n + i]);
                m[i * n + j] = mean;
                m[j * n + i] = mean;
            }
        }
        return m;
    }
}
