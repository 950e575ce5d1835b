package backstate.estimation;

/**
 * Observability Gramians of a linear time-invariant system dx/dt = A x, y = C x.
 *
 * <p>Layout: A is n×n and C is p×n, both row-major as in {@link Matrices}; the Gramian is n×n.
 */
public final class ObservabilityGramians {
    /**
     * Largest max(‖A‖₁, ‖A‖∞)·τ for which one block exponential over [0, τ] is trusted. The block
     * route forms F12 ≈ exp(−Aᵀτ)·W and multiplies by F22ᵀ = exp(Aᵀτ), losing a factor
     * ‖exp(−Aᵀτ)‖₁‖exp(Aτ)‖₁ ≤ exp(2·max(‖A‖₁, ‖A‖∞)·τ) of relative accuracy; capping the
     * product at 1 keeps that factor below e² ≈ 7.4. Over a whole stiff horizon it is not small:
     * a thermal chain with a decay rate of 400/s over T = 2 s overflows (exp(800) > 1.8e308).
     */
    private static final double SINGLE_BLOCK_NORM = 1.0;

    private ObservabilityGramians() {
    }

    /**
     * Returns the finite-horizon Gramian W_o(T) = ∫₀ᵀ exp(Aᵀt) CᵀC exp(At) dt.
     * Method: C. F. Van Loan, "Computing integrals involving the matrix exponential",
     * IEEE Trans. Automat. Control 23(3):395–404, 1978, for W and Φ = exp(Aτ) on a short
     * horizon τ = T/2^k, then doubling W(2τ) = W(τ) + Φᵀ W(τ) Φ, Φ ← Φ² (after R. A. Smith,
     * SIAM J. Appl. Math. 16(1):198–201, 1968; from memory).
     *
     * <p>On [0, τ]: F = exp([[−Aᵀ, CᵀC], [0, A]] τ) gives Φ = F22 and W(τ) = F22ᵀ F12. When
     * max(‖A‖₁, ‖A‖∞)·T ≤ {@link #SINGLE_BLOCK_NORM} then k = 0 and this is exactly Van Loan's
     * single exponential; otherwise k is the least integer bringing the product under that bound.
     * Deviation from a single exponential over [0, T]: that route loses
     * log₁₀‖exp(−AᵀT)‖‖exp(AT)‖ digits and overflows on stiff systems; each doubling adds two
     * positive semi-definite terms, so nothing cancels. The result is symmetrised as (W + Wᵀ)/2,
     * which removes the rounding-level asymmetry of the products and nothing else.
     *
     * @throws IllegalArgumentException on wrong shapes, non-finite entries, or a horizon not finite and &gt; 0
     */
    public static double[] continuousFinite(double[] a, double[] c, int n, int p, double horizon) {
        LinearSystemArguments.requireAtLeast("n", n, 1);
        LinearSystemArguments.requireAtLeast("p", p, 1);
        LinearSystemArguments.requireMatrix("a", a, n, n);
        LinearSystemArguments.requireMatrix("c", c, p, n);
        LinearSystemArguments.requirePositive("horizon", horizon);

        double[] transposed = Matrices.transpose(a, n, n);
        double norm = Math.max(Matrices.norm1(a, n, n), Matrices.norm1(transposed, n, n));
        LinearSystemArguments.requireFinite("max(‖a‖₁, ‖a‖∞) * horizon", norm * horizon);
        int doublings = 0;
        while (Math.scalb(norm * horizon, -doublings) > SINGLE_BLOCK_NORM) {
            doublings++;
        }
        double tau = Math.scalb(horizon, -doublings);

        int size = 2 * n;
        double[] augmented = new double[size * size];
        for (int i = 0; i < transposed.length; i++) {
            transposed[i] = -transposed[i];
        }
        double[] weight = Matrices.multiply(Matrices.transpose(c, p, n), c, n, p, n);
        Matrices.copyBlock(transposed, n, n, n, augmented, size, 0, 0);
        Matrices.copyBlock(weight, n, n, n, augmented, size, 0, n);
        Matrices.copyBlock(a, n, n, n, augmented, size, n, n);
        double[] f = MatrixExponential.expBlockUpper(augmented, size, n, tau);

        double[] phi = Matrices.block(f, size, n, n, n, n);
        double[] w = Matrices.multiply(Matrices.transpose(phi, n, n), Matrices.block(f, size, 0, n, n, n), n, n, n);
        double[] work = new double[n * n];
        for (int k = 0; k < doublings; k++) {
            Matrices.multiplyInto(w, phi, n, n, n, work);
            addTransposedProduct(phi, work, n, w);
            Matrices.multiplyInto(phi, phi, n, n, n, work);
            double[] swap = phi;
            phi = work;
            work = swap;
        }
        symmetrise(w, n);
        return w;
    }

    /** Adds Xᵀ Y to target (all n×n), walking rows of X and Y so no transpose is formed. */
    private static void addTransposedProduct(double[] x, double[] y, int n, double[] target) {
        for (int k = 0; k < n; k++) {
            for (int i = 0; i < n; i++) {
                double xki = x[k * n + i];
                if (xki == 0.0) {
                    continue;
                }
                for (int j = 0; j < n; j++) {
                    target[i * n + j] += xki * y[k * n + j];
                }
            }
        }
    }

    private static void symmetrise(double[] w, int n) {
        for (int i = 0; i < n; i++) {
            for (int j = i + 1; j < n; j++) {
                double mean = 0.5 * (w[i * n + j] + w[j * n + i]);
                w[i * n + j] = mean;
                w[j * n + i] = mean;
            }
        }
    }
}
