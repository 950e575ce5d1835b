package backstate.estimation;

/**
 * The reduced equations of one uniform block of the sampled formulation, straight from the block's
 * measured outputs and inputs, without simulating the block sample by sample.
 *
 * <p>A block of B samples from sample k with step h has the whitened equations H·[s; o] ≈
 * W(y − O·f_k − T·U), with H = [W·O, W·E] = Q₁R factored once per step ({@link UniformBlocks}),
 * W = diag(1/σ), O = [CΦ^i]_{i&lt;B}, f_k the forced state at sample k, U = [u_k; …; u_{k+B−1}] and T
 * the block-Toeplitz map of the Markov parameters D, CΓ, CΦΓ, … (Khargonekar, Poolla &amp;
 * Tannenbaum 1985, as in {@link LiftedStep}). Folding keeps only z = Q₁ᵀ·(right-hand side), and
 * since Q₁ᵀ·W·O·f_k = R[:, states]·f_k,
 *
 * <pre>
 *   z = (Q₁ᵀW)·y − (Q₁ᵀWT)·U − R[:, states]·f_k,     f_{k+B−1} = Φ^{B−1} f_k + [Φ^{B−2}Γ … Γ]·[u_k … u_{k+B−2}]
 * </pre>
 *
 * with Q₁ᵀW (q × B·p) and Q₁ᵀWT (q × B·m) formed once per step: q·(p + m) + n·m multiply-adds a
 * sample, against the lifted simulation plus Householder's 2·q·p of {@link UniformBlocks}' route.
 * The same z, so the same least-squares problem, up to the rounding of reassociated sums (block
 * sequential accumulation, Lawson &amp; Hanson 1974, ch. 27). What it does not give is the part of
 * the residual the reduction splits off, ‖Q₂ᵀb‖²: the sampled formulation takes χ² from the
 * residual pass instead ({@link InitialStateEstimator}).
 *
 * <p>Layout: every matrix row-major, one row per unknown, so each entry of z is one contiguous dot
 * product with the trace's row-major outputs or inputs of the block.
 */
final class BlockProjection {
    private final int n;
    private final int p;
    private final int m;
    private final int q;
    private final int samples;
    private final double[] r;
    /** Q₁ᵀW, q × B·p. */
    private final double[] outputWeights;
    /** Q₁ᵀWT, q × B·m. */
    private final double[] inputWeights;
    /** [Φ^{B−1} | Φ^{B−2}Γ … Γ], n × (n + (B−1)·m). */
    private final double[] carry;
    private final double[] stacked;
    private final double[] fromInputs;
    private final double[] fromState;

    /**
     * @param plan  QR of the block's whitened matrix H (B·p × q), from {@link UniformBlocks}
     * @param step  Φ(h) and Γ(h) of the block's step
     * @param sigma noise σ per channel, the W of H
     */
    BlockProjection(HouseholderQr plan, ZeroOrderHold.Step step, double[] c, double[] d, double[] sigma,
                    int n, int q, int samples) {
        this.n = n;
        this.p = sigma.length;
        this.m = step.input().length / n;
        this.q = q;
        this.samples = samples;
        this.r = plan.r();
        this.outputWeights = weightedTranspose(plan.thinQ(), sigma, samples * p, q);
        this.inputWeights = projectedMarkov(step, c, d);
        this.carry = new double[n * (n + (samples - 1) * m)];
        LiftedStep.placeInputCarries(step.transition(), step.input(), n, m, samples - 1, carry);
        double[] power = Matrices.identity(n);
        for (int i = 1; i < samples; i++) {
            power = Matrices.multiply(power, step.transition(), n, n, n);
        }
        Matrices.copyBlock(power, n, n, n, carry, n + (samples - 1) * m, 0, 0);
        this.stacked = new double[n + (samples - 1) * m];
        this.fromInputs = new double[q];
        this.fromState = new double[q];
    }

    /** Bytes a projection holds for these sizes and B samples a block. */
    static long bytes(int n, int p, int m, int q, int samples) {
        return Double.BYTES * ((long) q * samples * (p + m) + (long) n * (n + (samples - 1L) * m));
    }

    /** R of the block's H, q×q row-major upper triangular (shared; callers must not write). */
    double[] r() {
        return r;
    }

    /**
     * Writes the block's reduced right-hand side z (q entries) into z, for the block from sample k
     * with the forced state f_k in {@code forced}, and moves {@code forced} to the block's last sample.
     */
    void project(double[] outputs, double[] inputs, int k, double[] forced, double[] z) {
        Matrices.multiplyVector(outputWeights, outputs, k * p, q, samples * p, z);
        Matrices.multiplyVector(inputWeights, inputs, k * m, q, samples * m, fromInputs);
        for (int i = 0; i < q; i++) {
            double s = 0.0;
            for (int l = i; l < n; l++) {
                s += r[i * q + l] * forced[l];
            }
            fromState[i] = s;
        }
        for (int i = 0; i < q; i++) {
            z[i] = z[i] - fromInputs[i] - fromState[i];
        }
        System.arraycopy(forced, 0, stacked, 0, n);
        System.arraycopy(inputs, k * m, stacked, n, (samples - 1) * m);
        Matrices.multiplyVector(carry, stacked, n, n + (samples - 1) * m, forced);
    }

    /** Q₁ᵀW as q rows of B·p: entry (i, s·p + j) = Q₁[s·p + j, i] / σ_j; thinQ is column-major. */
    private static double[] weightedTranspose(double[] thinQ, double[] sigma, int rows, int q) {
        int p = sigma.length;
        double[] out = new double[q * rows];
        for (int i = 0; i < q; i++) {
            for (int row = 0; row < rows; row++) {
                out[i * rows + row] = thinQ[i * rows + row] / sigma[row % p];
            }
        }
        return out;
    }

    /**
     * Q₁ᵀWT, column (l, c) = Σ_{s≥l} (Q₁ᵀW)_s h_{s−l}[:, c] with (Q₁ᵀW)_s the q×p columns of sample s,
     * h_0 = D and h_j = CΦ^{j−1}Γ: from the last sample back, V_l = Σ_{s&gt;l} (Q₁ᵀW)_s CΦ^{s−l−1} by
     * V_{l−1} = (Q₁ᵀW)_l C + V_l Φ (Horner's rule for the matrix polynomial, common practice, no
     * source), and column block l = (Q₁ᵀW)_l D + V_l Γ.
     */
    private double[] projectedMarkov(ZeroOrderHold.Step step, double[] c, double[] d) {
        double[] out = new double[q * samples * m];
        if (m == 0) {
            return out;
        }
        int rows = samples * p;
        double[] v = new double[q * n];
        double[] sampleWeights = new double[q * p];
        double[] block = new double[q * m];
        double[] carried = new double[q * m];
        double[] next = new double[q * n];
        double[] fromOutputs = new double[q * n];
        for (int l = samples - 1; l >= 0; l--) {
            for (int i = 0; i < q; i++) {
                System.arraycopy(outputWeights, i * rows + l * p, sampleWeights, i * p, p);
            }
            Matrices.multiplyInto(sampleWeights, d, q, p, m, block);
            Matrices.multiplyInto(v, step.input(), q, n, m, carried);
            for (int i = 0; i < q; i++) {
                for (int col = 0; col < m; col++) {
                    out[i * samples * m + l * m + col] = block[i * m + col] + carried[i * m + col];
                }
            }
            Matrices.multiplyInto(v, step.transition(), q, n, n, next);
            Matrices.multiplyInto(sampleWeights, c, q, p, n, fromOutputs);
            for (int i = 0; i < q * n; i++) {
                v[i] = fromOutputs[i] + next[i];
            }
        }
        return out;
    }
}
