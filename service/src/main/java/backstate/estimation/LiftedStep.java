package backstate.estimation;

/**
 * S equal steps of a zero-order-hold system taken as one, the lifted form of a discrete-time system
 * (Khargonekar, Poolla &amp; Tannenbaum, IEEE Trans. Automat. Control 30(11), 1985; from memory). With
 * w = [x_k; u_k; …; u_{k+S−1}], the state S samples on and the outputs of samples k … k+S−1 are
 *
 * <pre>
 *   x_{k+S}        = [Φ^S | Φ^{S−1}Γ … ΦΓ Γ]·w
 *   y_{k+i}, i &lt; S = [CΦ^i | CΦ^{i−1}Γ … CΓ D 0 … 0]·w
 * </pre>
 *
 * so S samples cost two products with one stacked vector, p·n + p·S·m + n²/S + n·m multiply-adds
 * a sample against n² + n·m + p·n + p·m step by step: fewer when 4·p·m &lt; n² at S = 4. The inputs
 * u_k … u_{k+S−1} sit contiguously in the trace's row-major input array, so w is two copies.
 * Results equal the step-by-step route up to the rounding of the reassociated sums.
 */
final class LiftedStep {
    /** Samples per lifted step where lifting pays. */
    static final int SAMPLES = 4;

    private final int n;
    private final int m;
    private final int p;
    private final int width;
    private final double[] state;
    private final double[] outputs;

    /** Lifts S = {@link #SAMPLES} steps of {@code step} for the model's C and D. */
    LiftedStep(ZeroOrderHold.Step step, double[] c, double[] d, int n, int p, int m) {
        this.n = n;
        this.m = m;
        this.p = p;
        this.width = n + SAMPLES * m;
        this.state = new double[n * width];
        this.outputs = new double[SAMPLES * p * width];
        double[] phi = step.transition();
        double[] gamma = step.input();
        // Markov parameters CΦ^jΓ (p×m) and powers CΦ^i (p×n), built by repeated products.
        double[] cPower = c.clone();
        double[][] markov = new double[SAMPLES][];
        for (int i = 0; i < SAMPLES; i++) {
            Matrices.copyBlock(cPower, n, p, n, outputs, width, i * p, 0);
            markov[i] = Matrices.multiply(cPower, gamma, p, n, m);
            cPower = Matrices.multiply(cPower, phi, p, n, n);
        }
        for (int i = 0; i < SAMPLES; i++) {
            Matrices.copyBlock(d, m, p, m, outputs, width, i * p, n + i * m);
            for (int l = 0; l < i; l++) {
                Matrices.copyBlock(markov[i - 1 - l], m, p, m, outputs, width, i * p, n + l * m);
            }
        }
        // [Φ^S | Φ^{S−1}Γ … Γ]
        placeInputCarries(phi, gamma, n, m, SAMPLES, state);
        double[] power = phi.clone();
        for (int l = 1; l < SAMPLES; l++) {
            power = Matrices.multiply(power, phi, n, n, n);
        }
        Matrices.copyBlock(power, n, n, n, state, width, 0, 0);
    }

    /**
     * Writes Φ^{steps−1−l}Γ into column block l (columns n + l·m …) of the n × (n + steps·m)
     * row-major {@code out}, for l = 0 … steps−1: how the input held over step l carries to the
     * end of the run. Built from the last block back, one Φ product each.
     */
    static void placeInputCarries(double[] phi, double[] gamma, int n, int m, int steps, double[] out) {
        int width = n + steps * m;
        double[] carry = gamma.clone();
        double[] next = new double[n * m];
        for (int l = steps - 1; l >= 0; l--) {
            Matrices.copyBlock(carry, m, n, m, out, width, 0, n + l * m);
            Matrices.multiplyInto(phi, carry, n, n, m, next);
            double[] swap = carry;
            carry = next;
            next = swap;
        }
    }

    /** Whether lifting saves work for this model size (see the class comment). */
    static boolean pays(int n, int p, int m) {
        return SAMPLES * p * m < n * n;
    }

    /** A work vector for {@link #advance}: n + S·m entries. */
    double[] newWork() {
        return new double[width];
    }

    /**
     * From the state x at sample k: writes the outputs C·x + D·u of samples k … k+S−1 into
     * y (S·p, sample-major) and overwrites x with the state at sample k+S.
     */
    void advance(double[] x, double[] inputs, int k, double[] work, double[] y) {
        outputsOnly(x, inputs, k, work, y);
        Matrices.multiplyVector(state, work, n, width, x);
    }

    /** Outputs of samples k … k+S−1 only, x unchanged (for the last stretch of a block); leaves [x; u_k … u_{k+S−1}] in work. */
    void outputsOnly(double[] x, double[] inputs, int k, double[] work, double[] y) {
        System.arraycopy(x, 0, work, 0, n);
        System.arraycopy(inputs, k * m, work, n, SAMPLES * m);
        Matrices.multiplyVector(outputs, work, SAMPLES * p, width, y);
    }
}
