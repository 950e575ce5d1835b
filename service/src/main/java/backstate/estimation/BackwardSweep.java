package backstate.estimation;

import java.util.Arrays;

/**
 * The backward half of the smoother: a square-root information filter run from the last sample to
 * the first (Bierman 1977, Factorization Methods for Discrete Sequential Estimation, ch. VI, run in
 * reverse time), holding [R | z] with RᵀR the information about the state at sample k from the
 * samples k … N−1.
 *
 * <p>Unknowns are the state augmented with the constant sensor offsets (s = n or n + p). Between
 * samples, x_{k+1} = Φ x_k + Γ u_k + G ξ with ξ ~ N(0, I_r) and G Gᵀ = Q_d ({@link NoiseSteps}). The
 * step back substitutes x_{k+1} into R x_{k+1} ≈ z, stacks the noise's own information I·ξ ≈ 0 on
 * top, and triangularises [[I, 0 | 0], [R G, R Φ | z − R Γ u]] by Householder reflections: the top r
 * rows [R_ξ, R_ξx | z_ξ] are the noise's information given x_k (kept for the forward sweep,
 * Bierman's smoother rows), the bottom s rows the information about x_k. Neither Q_d nor Φ is
 * inverted: a singular Q_d only has fewer columns in G (directions without noise carry the exact
 * transition), and Φ may be singular. Samples are folded in one present channel at a time by
 * {@link StackedQr#foldRow}, whose remainder is the normalised innovation.
 *
 * <p>Memory O(s² + n·(n + s)); cost O(N·(r + s)²·(r + s)) for the Householder step, linear in N.
 */
final class BackwardSweep {
    /**
     * The information counts as covering every unknown, so a remainder is a proper innovation, once
     * the smallest diagonal of R exceeds s·ε times the largest (the rank rule of
     * {@link ConditioningAnalysis}, on the diagonal as a cheap proxy).
     */
    static final double INFORMED_RATIO = ConditioningAnalysis.EPS;

    /** Receives each present sample's normalised innovation once the information covers every unknown. */
    interface InnovationSink {
        void add(int channel, double measured, double innovation);
    }

    private final SolveContext ctx;
    private final NoiseSteps noise;
    private final int n;
    private final int s;
    private final int width;
    private final double[] info;
    private final double[] stack;
    private final double[] row;
    private final double[] forced;
    private final double[] held;
    private final double[] direct;
    private final double[] dMatrix;
    private double residualSquares;
    private long equations;

    BackwardSweep(SolveContext ctx, NoiseSteps noise) {
        this.ctx = ctx;
        this.noise = noise;
        this.n = ctx.n;
        this.s = ctx.q;
        this.width = s + 1;
        this.info = new double[s * width];
        this.stack = new double[(n + s) * (n + s + 1)];
        this.row = new double[width];
        this.forced = new double[n];
        this.held = new double[Math.max(ctx.m, 1)];
        this.direct = new double[ctx.p];
        this.dMatrix = ctx.model.d();
    }

    /** [R | z], s × (s + 1) row-major: the sweep's own array. */
    double[] info() {
        return info;
    }

    /** Starts again from the given information (a checkpoint's copy). */
    void restore(double[] saved) {
        System.arraycopy(saved, 0, info, 0, info.length);
    }

    double residualSquares() {
        return residualSquares;
    }

    long equations() {
        return equations;
    }

    /** Folds every present output of sample k; innovations go to sink when it is not null. */
    void measure(int k, InnovationSink sink) {
        int p = ctx.p;
        int m = ctx.m;
        Arrays.fill(direct, 0.0);
        if (m > 0) {
            for (int j = 0; j < p; j++) {
                direct[j] = Matrices.dot(dMatrix, j * m, ctx.inputs, k * m, m);
            }
        }
        for (int j = 0; j < p; j++) {
            double y = ctx.trace.output(k, j);
            if (Double.isNaN(y)) {
                continue;
            }
            double whitening = 1.0 / ctx.noise.sigma(j);
            boolean informed = sink != null && informed();
            Arrays.fill(row, 0.0);
            for (int i = 0; i < n; i++) {
                row[i] = ctx.c[j * n + i] * whitening;
            }
            if (s > n) {
                row[n + j] = whitening;
            }
            row[s] = (y - direct[j]) * whitening;
            StackedQr.foldRow(info, s, width, row);
            double remainder = row[s];
            residualSquares += remainder * remainder;
            equations++;
            if (informed) {
                sink.add(j, y, remainder);
            }
        }
    }

    /** Folds extra whitened rows [a | b] (count × (s + 1), row-major), such as a prior's. */
    void foldRows(double[] rows, int count) {
        for (int i = 0; i < count; i++) {
            System.arraycopy(rows, i * width, row, 0, width);
            StackedQr.foldRow(info, s, width, row);
            residualSquares += row[s] * row[s];
        }
    }

    /**
     * Steps the information back from sample k+1 to sample k. When {@code kept} is not null, the
     * noise rows [R_ξ, R_ξx | z_ξ] (r × (r + s + 1)) are copied to it at {@code offset}; returns r.
     */
    int stepBack(int k, double[] kept, int offset) {
        long step = ctx.units(k + 1) - ctx.units(k);
        ZeroOrderHold.Step transition = ctx.transitions.over(step);
        ProcessNoiseCovariance.Factor factor = noise.over(step);
        int r = factor.rank();
        int w = r + s + 1;
        int rows = r + s;
        Arrays.fill(stack, 0, rows * w, 0.0);
        for (int i = 0; i < r; i++) {
            stack[i * w + i] = 1.0;
        }
        heldInputResponse(k, transition.input());
        double[] phi = transition.transition();
        double[] g = factor.g();
        for (int i = 0; i < s; i++) {
            int at = (r + i) * w;
            int from = i * width;
            for (int l = i; l < n; l++) {
                double ril = info[from + l];
                if (ril == 0.0) {
                    continue;
                }
                for (int c = 0; c < r; c++) {
                    stack[at + c] += ril * g[l * r + c];
                }
                for (int c = 0; c < n; c++) {
                    stack[at + r + c] += ril * phi[l * n + c];
                }
                stack[at + w - 1] -= ril * forced[l];
            }
            for (int c = Math.max(n, i); c < s; c++) {
                stack[at + r + c] = info[from + c];
            }
            stack[at + w - 1] += info[from + s];
        }
        StackedQr.triangularize(stack, rows, w, rows, r);
        for (int i = 0; i < s; i++) {
            System.arraycopy(stack, (r + i) * w + r, info, i * width, width);
        }
        if (kept != null) {
            System.arraycopy(stack, 0, kept, offset, r * w);
        }
        return r;
    }

    private void heldInputResponse(int k, double[] gamma) {
        heldInputResponse(ctx, k, gamma, held, forced);
    }

    /** forced ← Γ u_k, the held input's response over the step (held: m-long scratch). */
    static void heldInputResponse(SolveContext ctx, int k, double[] gamma, double[] held, double[] forced) {
        int n = ctx.n;
        int m = ctx.m;
        if (m == 0) {
            Arrays.fill(forced, 0.0);
            return;
        }
        System.arraycopy(ctx.inputs, k * m, held, 0, m);
        Matrices.multiplyVector(gamma, held, n, m, forced);
    }

    /** True when R's smallest diagonal exceeds s·ε times its largest, and at least s equations are in. */
    private boolean informed() {
        if (equations < s) {
            return false;
        }
        double smallest = Double.POSITIVE_INFINITY;
        double largest = 0.0;
        for (int i = 0; i < s; i++) {
            double d = info[i * width + i];
            smallest = Math.min(smallest, d);
            largest = Math.max(largest, d);
        }
        return smallest > s * INFORMED_RATIO * largest;
    }
}
