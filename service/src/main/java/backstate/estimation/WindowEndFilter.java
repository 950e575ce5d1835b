package backstate.estimation;

import java.util.Arrays;

/**
 * The state at the window's last sample given the whole window, with its covariance, in memory
 * independent of N: a square-root information filter run forward from the first sample (Bierman
 * 1977, Factorization Methods for Discrete Sequential Estimation, ch. VI), whose estimate at the
 * last sample is the fixed-interval smoothed one there (Bierman 1977, ch. X: the smoother's
 * terminal condition), so {@link SmoothedTrajectory}'s checkpoints are not needed for it.
 *
 * <p>Unknowns, noise factors G (G Gᵀ = Q_d, {@link NoiseSteps}), transitions and the measurement fold
 * are the backward sweep's ({@link BackwardSweep#measure}, {@link BackwardSweep#foldRows}; folding a
 * row does not depend on the direction of time). The time update substitutes x_k = Φ⁻¹(x_{k+1} − Γ u_k
 * − G ξ) into R x_k ≈ z, stacks I·ξ ≈ 0 on top and triangularises
 * [[I, 0 | 0], [−D G, D, R_o | z + D Γ u_k]], D = R_x Φ⁻¹, by {@link StackedQr#triangularize}; the
 * bottom s rows are the information about x_{k+1}. D comes from a Householder QR of Φᵀ
 * (Φᵀ Dᵀ = R_xᵀ), never from an explicit inverse. Unlike the backward sweep this needs Φ
 * invertible: a step whose Φ is singular or worse conditioned than {@link #TRANSITION_RATIO} allows
 * ends the filter without an answer, and the caller takes the smoother's route.
 *
 * <p>Memory O(s·(r + s) + n·(n + s)); cost O(N·(r + s)³): the backward sweep's stacked QR per step
 * plus a QR of Φᵀ, about 1.5 times the backward sweep in bench/process-noise.sh.
 */
final class WindowEndFilter {
    /**
     * Smallest |diagonal| ratio of Φᵀ's triangular factor (a cheap proxy for 1/κ(Φ)) the filter
     * accepts: the update's relative error grows like κ(Φ)·ε, so past 10⁸ fewer than about eight
     * digits would remain and the smoother, which never inverts Φ, is the better route.
     */
    static final double TRANSITION_RATIO = 1e-8;

    /** The filtered (= smoothed) augmented state at the last sample and a root of its covariance, P = root rootᵀ. */
    record End(double[] state, double[] root) {
    }

    private final SolveContext ctx;
    private final NoiseSteps noise;
    private final BackwardSweep sweep;
    private final int n;
    private final int s;
    private final int width;
    private final double[] stack;
    private final double[] transposed;
    private final double[] d;
    private final double[] forced;
    private final double[] held;

    private WindowEndFilter(SolveContext ctx, NoiseSteps noise) {
        this.ctx = ctx;
        this.noise = noise;
        this.sweep = new BackwardSweep(ctx, noise);
        this.n = ctx.n;
        this.s = ctx.q;
        this.width = s + 1;
        this.stack = new double[(n + s) * (n + s + 1)];
        this.transposed = new double[n * (n + s)];
        this.d = new double[s * n];
        this.forced = new double[n];
        this.held = new double[Math.max(ctx.m, 1)];
    }

    /**
     * Runs the filter over the window with the given whitened prior rows ({@code priorCount} rows of
     * [a | b], s + 1 wide, or none); null when some step's transition is too ill-conditioned to invert.
     */
    static End run(SolveContext ctx, NoiseSteps noise, double[] priorRows, int priorCount) {
        WindowEndFilter filter = new WindowEndFilter(ctx, noise);
        if (priorCount > 0) {
            filter.sweep.foldRows(priorRows, priorCount);
        }
        int samples = ctx.trace.samples();
        for (int k = 0; k < samples; k++) {
            filter.sweep.measure(k, null);
            if (k < samples - 1 && !filter.stepForward(k)) {
                return null;
            }
        }
        return filter.end();
    }

    private End end() {
        double[] info = sweep.info();
        double[] r = ProcessNoiseSmoother.factorOf(info, s);
        double[] state = Triangular.solveUpper(r, ProcessNoiseSmoother.rhsOf(info, s), s);
        return new End(state, Triangular.invertUpper(r, s));
    }

    /** [R | z] ← the information about x_{k+1} from the prior and samples 0 … k; false when Φ is refused. */
    private boolean stepForward(int k) {
        long units = ctx.units(k + 1) - ctx.units(k);
        ZeroOrderHold.Step transition = ctx.transitions.over(units);
        ProcessNoiseCovariance.Factor factor = noise.over(units);
        double[] info = sweep.info();
        if (!solveAgainstTransition(transition.transition(), info)) {
            return false;
        }
        BackwardSweep.heldInputResponse(ctx, k, transition.input(), held, forced);
        int r = factor.rank();
        double[] g = factor.g();
        int w = r + s + 1;
        int rows = r + s;
        Arrays.fill(stack, 0, rows * w, 0.0);
        for (int i = 0; i < r; i++) {
            stack[i * w + i] = 1.0;
        }
        for (int i = 0; i < s; i++) {
            int at = (r + i) * w;
            double rhs = info[i * width + s];
            for (int c = 0; c < n; c++) {
                double dc = d[i * n + c];
                if (dc == 0.0) {
                    continue;
                }
                stack[at + r + c] = dc;
                for (int l = 0; l < r; l++) {
                    stack[at + l] -= dc * g[c * r + l];
                }
                rhs += dc * forced[c];
            }
            for (int c = Math.max(n, i); c < s; c++) {
                stack[at + r + c] = info[i * width + c];
            }
            stack[at + w - 1] = rhs;
        }
        StackedQr.triangularize(stack, rows, w, rows, r);
        for (int i = 0; i < s; i++) {
            System.arraycopy(stack, (r + i) * w + r, info, i * width, width);
        }
        return true;
    }

    /**
     * d ← R_x Φ⁻¹ (s × n) by a Householder QR of [Φᵀ | R_xᵀ] (Golub &amp; Van Loan 2013, Matrix
     * Computations, §5.3.2, least squares by QR) and back substitution; false when Φ is refused.
     */
    private boolean solveAgainstTransition(double[] phi, double[] info) {
        int w = n + s;
        for (int a = 0; a < n; a++) {
            for (int c = 0; c < n; c++) {
                transposed[a * w + c] = phi[c * n + a];
            }
            for (int i = 0; i < s; i++) {
                transposed[a * w + n + i] = info[i * width + a];
            }
        }
        StackedQr.triangularize(transposed, n, w, n);
        double smallest = Double.POSITIVE_INFINITY;
        double largest = 0.0;
        for (int a = 0; a < n; a++) {
            double u = Math.abs(transposed[a * w + a]);
            smallest = Math.min(smallest, u);
            largest = Math.max(largest, u);
        }
        if (!(smallest > TRANSITION_RATIO * largest)) {
            return false;
        }
        for (int i = 0; i < s; i++) {
            for (int a = n - 1; a >= 0; a--) {
                double t = transposed[a * w + n + i];
                for (int b = a + 1; b < n; b++) {
                    t -= transposed[a * w + b] * d[i * n + b];
                }
                d[i * n + a] = t / transposed[a * w + a];
            }
        }
        return true;
    }
}
