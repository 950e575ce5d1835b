package backstate.estimation;

/**
 * The square-root information factors one solve accumulates. Each data equation arrives whitened
 * (row a and right-hand side b already divided by σ) with a weight w ≥ 0 of the formulation:
 * <ul>
 *   <li>{@link #estimate}: rows √w·a, right-hand sides √w·b — the cost the estimate minimises;</li>
 *   <li>{@link #spread}: rows w·a — M = Σ w² a aᵀ, the middle of the sandwich covariance
 *       B⁻¹ M B⁻¹ with B = Σ w a aᵀ, which is Cov(θ̂) when the noise is independent per sample
 *       with the stated σ (the covariance K Σ Kᵀ of a linear estimator θ̂ = K y; Huber 1967;
 *       White 1980, Econometrica 48(4) — from memory);</li>
 *   <li>{@link #perSample}: rows a, right-hand sides b — the per-sample fit whose residual sum
 *       is χ² with equations − q degrees of freedom under that noise model.</li>
 * </ul>
 * With w ≡ 1 (the sampled formulation) the three coincide and only {@link #estimate} is kept.
 * All three are sequential Householder accumulations (Lawson &amp; Hanson 1974, ch. 27).
 */
final class WeightedFactors {
    final SquareRootInformation estimate;
    /** Null when every weight is 1. */
    final SquareRootInformation spread;
    /** The same object as {@link #estimate} when every weight is 1. */
    final SquareRootInformation perSample;
    private final double[] scaledRow;
    private final double[] scaledRhs;
    private final double[] zeros;

    private WeightedFactors(SquareRootInformation estimate, SquareRootInformation spread,
                            SquareRootInformation perSample) {
        this.estimate = estimate;
        this.spread = spread;
        this.perSample = perSample;
        int q = estimate.unknowns();
        this.scaledRow = new double[q * q];
        this.scaledRhs = new double[q];
        this.zeros = new double[q];
    }

    /** Factors for q unknowns; {@code weighted} when the formulation's weights may differ from 1. */
    static WeightedFactors create(int q, boolean weighted) {
        SquareRootInformation estimate = new SquareRootInformation(q);
        if (!weighted) {
            return new WeightedFactors(estimate, null, estimate);
        }
        return new WeightedFactors(estimate, new SquareRootInformation(q), new SquareRootInformation(q));
    }

    boolean weighted() {
        return spread != null;
    }

    /** Adds one whitened equation a·θ ≈ b of weight w (w is ignored when unweighted). */
    void add(double[] row, double rhs, double weight) {
        if (spread == null) {
            estimate.add(row, rhs);
            return;
        }
        perSample.add(row, rhs);
        int q = row.length;
        double root = Math.sqrt(weight);
        for (int i = 0; i < q; i++) {
            scaledRow[i] = row[i] * weight;
        }
        spread.add(scaledRow, 0.0);
        for (int i = 0; i < q; i++) {
            scaledRow[i] = row[i] * root;
        }
        estimate.add(scaledRow, rhs * root);
    }

    /**
     * Adds a block of {@code represented} whitened equations of one weight w, already reduced by an
     * orthogonal transformation to {@code count} ≤ q rows (see {@link SquareRootInformation#addReduced}).
     * Scaling every row of a block by one constant commutes with the reduction, so one reduction
     * serves all three factors.
     */
    void addReduced(double[] rows, double[] rhs, int count, long represented, double splitSquares, double weight) {
        if (spread == null) {
            estimate.addReduced(rows, rhs, count, represented, splitSquares);
            return;
        }
        perSample.addReduced(rows, rhs, count, represented, splitSquares);
        int q = estimate.unknowns();
        int size = count * q;
        for (int i = 0; i < size; i++) {
            scaledRow[i] = rows[i] * weight;
        }
        spread.addReduced(scaledRow, zeros, count, represented, 0.0);
        double root = Math.sqrt(weight);
        for (int i = 0; i < size; i++) {
            scaledRow[i] = rows[i] * root;
        }
        for (int r = 0; r < count; r++) {
            scaledRhs[r] = rhs[r] * root;
        }
        estimate.addReduced(scaledRow, scaledRhs, count, represented, splitSquares * weight);
    }

    /** An independent copy with every pending equation folded in. */
    WeightedFactors copy() {
        SquareRootInformation e = estimate.copy();
        if (spread == null) {
            return new WeightedFactors(e, null, e);
        }
        return new WeightedFactors(e, spread.copy(), perSample.copy());
    }

    /**
     * Appends a prior's whitened pseudo-equations with weight 1 to every factor: a prior is
     * information about x0, not a sample of the window, whatever the formulation.
     */
    void addPrior(Prior prior, int n) {
        PriorEquations.add(estimate, prior, n);
        if (spread != null) {
            PriorEquations.add(spread, prior, n);
            PriorEquations.add(perSample, prior, n);
        }
    }

    /**
     * Folds the factors of a later chunk, accumulated with the chunk's start state as unknown, into
     * these: each tail row R·[s; o] ≈ z becomes R·diag(Φ, I)·θ ≈ z − R[:, states]·f with
     * s = Φ x0 + f (see {@link ChunkedEquations}).
     */
    void appendChunk(WeightedFactors tail, double[] phi, double[] forced, int n) {
        appendChunk(estimate, tail.estimate, phi, forced, n);
        if (spread != null) {
            appendChunk(spread, tail.spread, phi, forced, n);
            appendChunk(perSample, tail.perSample, phi, forced, n);
        }
    }

    private static void appendChunk(SquareRootInformation head, SquareRootInformation tail, double[] phi,
                                    double[] forced, int n) {
        int q = head.unknowns();
        double[] r = tail.factorR();
        double[] z = tail.rhs();
        double[] rows = new double[q * q];
        UniformBlocks.changeToInitialState(r, phi, n, q, rows);
        for (int i = 0; i < q; i++) {
            for (int l = 0; l < n; l++) {
                z[i] -= r[i * q + l] * forced[l];
            }
        }
        head.addReduced(rows, z, q, tail.equations(), tail.residualSquares());
    }
}
