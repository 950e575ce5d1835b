package backstate.estimation;

/**
 * How well the data determine the unknowns: the information matrix W = RᵀR (the weighted sampled
 * observability Gramian, plus prior information) and its eigen-structure, read off the SVD of the
 * square-root factor R so that W itself is never inverted.
 *
 * @param information       W, q×q row-major
 * @param eigenvalues       eigenvalues of W, ascending
 * @param conditionNumber   largest over smallest eigenvalue (infinite when rank-deficient)
 * @param rank              numerical rank of R
 * @param rankTolerance     singular values of R at or below this count as zero
 * @param weakestDirection  unit eigenvector of the smallest eigenvalue
 * @param weakestStd        standard deviation achievable along it, 1/sqrt(λ_min) with the given σ
 * @param dataRank          numerical rank from the data alone (prior excluded)
 */
public record Conditioning(double[] information, double[] eigenvalues, double conditionNumber, int rank,
                           double rankTolerance, double[] weakestDirection, double weakestStd, int dataRank) {
    /** κ(W) above 1e8 leaves fewer than half of double precision's ~16 digits in the normal equations: common practice, no source. */
    public static final double ILL_CONDITIONED_LIMIT = 1e8;
    /** Below 10 residual degrees of freedom χ² and whiteness tests have little power: common practice, no source. */
    public static final int FEW_SAMPLES_DOF = 10;
    /**
     * An offset whose variance the other unknowns inflate more than 100-fold (standard error 10×
     * what it would be with the states known, squared multiple correlation above 0.99) cannot be
     * told apart from them in practice; the usual multicollinearity alarm is 10, taken stricter
     * here because states of one model are correlated by nature (common practice, no source).
     */
    public static final double OFFSET_INFLATION_LIMIT = 100.0;
    /** A residual beyond 4σ has probability 6.3e-5 under Gaussian noise: common practice, no source. */
    public static final double OUTLIER_SIGMAS = 4.0;
}
