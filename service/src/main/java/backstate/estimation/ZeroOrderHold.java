package backstate.estimation;

/**
 * One-step transition and input matrices of a linear system held constant over a step.
 *
 * <p>Continuous time: dx/dt = A x + B u with u held constant over [0, h] (zero-order hold) gives
 * x(h) = Ad x(0) + Bd u with Ad = exp(A h) and Bd = ∫₀ʰ exp(A s) ds B. Discrete time: s steps of
 * x ← A x + B u with u fixed give x_s = A^s x_0 + (Σ_{i<s} A^i B) u.
 *
 * <p>Layout: A is n×n and B is n×m, both row-major as in {@link Matrices}. m = 0 (no inputs) is
 * allowed; B may then be null or empty and {@link Step#input()} is a zero-length array.
 */
public final class ZeroOrderHold {
    private ZeroOrderHold() {
    }

    /**
     * Transition (n×n) and input (n×m) matrices of one step, row-major, and the two side by side,
     * [Ad | Bd] (n×(n+m)), so that a step x ← Ad·x + Bd·u is one product with [x; u]. The arrays
     * are freshly allocated and owned by the caller; the record compares them by reference.
     */
    public record Step(double[] transition, double[] input, double[] stacked) {
        Step(double[] transition, double[] input, int n, int m) {
            this(transition, input, Matrices.sideBySide(transition, input, n, n, m));
        }
    }

    /**
     * Returns Ad = exp(A h) and Bd = ∫₀ʰ exp(A s) ds B, both read off exp([[A, B], [0, 0]] h), with
     * B balanced against A ({@link MatrixExponential#expBlockUpper}) so that the unit an input is
     * given in does not change the accuracy of Ad.
     * Method: C. F. Van Loan, "Computing integrals involving the matrix exponential",
     * IEEE Trans. Automat. Control 23(3):395–404, 1978.
     *
     * @throws IllegalArgumentException on wrong shapes, non-finite entries, or h not finite and &gt; 0
     */
    public static Step discretize(double[] a, double[] b, int n, int m, double h) {
        LinearSystemArguments.requireAtLeast("n", n, 1);
        LinearSystemArguments.requireAtLeast("m", m, 0);
        LinearSystemArguments.requireMatrix("a", a, n, n);
        double[] input = LinearSystemArguments.requireInputMatrix("b", b, n, m);
        LinearSystemArguments.requirePositive("h", h);

        if (m == 0) {
            return new Step(MatrixExponential.exp(a, n, h), input, n, 0);
        }
        int size = n + m;
        double[] augmented = new double[size * size];
        Matrices.copyBlock(a, n, n, n, augmented, size, 0, 0);
        Matrices.copyBlock(input, m, n, m, augmented, size, 0, n);
        double[] f = MatrixExponential.expBlockUpper(augmented, size, n, h);
        return new Step(Matrices.block(f, size, 0, 0, n, n), Matrices.block(f, size, 0, n, n, m), n, m);
    }

    /**
     * Returns A^s and Σ_{i=0}^{s−1} A^i B, read off the s-th power of [[A, B], [0, I]], which is
     * [[A^s, Σ_{i<s} A^i B], [0, I]]; the power is taken by binary powering (repeated squaring),
     * about 2 log₂ s block products.
     * Method: D. E. Knuth, The Art of Computer Programming, vol. 2, 3rd ed., §4.6.3, Algorithm A.
     *
     * @throws IllegalArgumentException on wrong shapes, non-finite entries, or steps &lt; 1
     */
    public static Step power(double[] a, double[] b, int n, int m, long steps) {
        LinearSystemArguments.requireAtLeast("n", n, 1);
        LinearSystemArguments.requireAtLeast("m", m, 0);
        LinearSystemArguments.requireMatrix("a", a, n, n);
        double[] input = LinearSystemArguments.requireInputMatrix("b", b, n, m);
        if (steps < 1) {
            throw new IllegalArgumentException("steps: got " + steps + ", expected at least 1");
        }

        int size = n + m;
        double[] base = new double[size * size];
        Matrices.copyBlock(a, n, n, n, base, size, 0, 0);
        Matrices.copyBlock(input, m, n, m, base, size, 0, n);
        for (int i = n; i < size; i++) {
            base[i * size + i] = 1.0;
        }

        double[] result = null;
        double[] work = new double[size * size];
        long remaining = steps;
        while (true) {
            if ((remaining & 1) != 0) {
                if (result == null) {
                    result = base.clone();
                } else {
                    Matrices.multiplyInto(result, base, size, size, size, work);
                    double[] swap = result;
                    result = work;
                    work = swap;
                }
            }
            remaining >>>= 1;
            if (remaining == 0) {
                break;
            }
            Matrices.multiplyInto(base, base, size, size, size, work);
            double[] swap = base;
            base = work;
            work = swap;
        }
        return new Step(Matrices.block(result, size, 0, 0, n, n), Matrices.block(result, size, 0, n, n, m), n, m);
    }
}
