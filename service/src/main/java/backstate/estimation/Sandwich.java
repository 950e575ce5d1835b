package backstate.estimation;

/**
 * Covariance of a weighted least-squares estimate when the weights are not the inverse noise
 * variances: with B = RᵀR the weighted information and M = SᵀS the weights' spread of the
 * per-sample noise (see {@link WeightedFactors}), Cov(θ̂) = B⁻¹ M B⁻¹ — the covariance K Σ Kᵀ of the
 * linear estimator K = B⁻¹Aᵀ D (the "sandwich"; Huber 1967, Proc. 5th Berkeley Symp. 1; White
 * 1980, Econometrica 48(4), 817–838 — from memory). Formed from the triangular factors as (S B⁻¹)ᵀ(S B⁻¹)
 * with B⁻¹ = R⁻¹R⁻ᵀ, so the result is symmetric positive semi-definite by construction and B is
 * never formed.
 */
final class Sandwich {
    private Sandwich() {
    }

    /** B⁻¹ M B⁻¹ from R⁻¹ (R the upper-triangular factor of B) and the upper-triangular factor S of M, q×q row-major. */
    static double[] covariance(double[] rInverse, double[] s, int q) {
        double[] bInverse = Triangular.timesOwnTranspose(rInverse, q);
        double[] half = Matrices.multiply(s, bInverse, q, q, q);
        double[] out = new double[q * q];
        for (int i = 0; i < q; i++) {
            for (int j = i; j < q; j++) {
                double sum = 0.0;
                for (int k = 0; k < q; k++) {
                    sum += half[k * q + i] * half[k * q + j];
                }
                out[i * q + j] = sum;
                out[j * q + i] = sum;
            }
        }
        return out;
    }

    /** The conditioning summary with the weakest direction's standard deviation √(vᵀ P v) taken from P. */
    static Conditioning withWeakestSpread(Conditioning c, double[] covariance, int q) {
        double[] v = c.weakestDirection();
        double variance = 0.0;
        for (int i = 0; i < q; i++) {
            for (int j = 0; j < q; j++) {
                variance += v[i] * covariance[i * q + j] * v[j];
            }
        }
        return new Conditioning(c.information(), c.eigenvalues(), c.conditionNumber(), c.rank(), c.rankTolerance(),
                v, Math.sqrt(variance), c.dataRank());
    }
}
