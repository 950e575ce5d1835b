package backstate.estimation;

/**
 * The forward half of the smoother: from the smoothed x̂0 and its covariance, the smoothed state at
 * every later sample, by the rows the backward sweep split off each step (Bierman 1977, ch. X, the
 * square-root information smoother of Dyer &amp; McReynolds 1969, here with the filter run backwards
 * so that no transition is inverted). Each step's noise rows R_ξ ξ + R_ξx x_k ≈ z_ξ carry an error
 * independent of x̂_k's, so
 * <pre>
 *   ξ̂ = R_ξ⁻¹ (z_ξ − R_ξx x̂_k),   x̂_{k+1} = Φ x̂_k + Γ u_k + G ξ̂,
 *   P_{k+1} = F P_k Fᵀ + K Kᵀ,   F = Φ − G R_ξ⁻¹ R_ξx,   K = G R_ξ⁻¹,
 * </pre>
 * (Φ, G over the augmented state: offsets are constant and noise-free). P is carried as a square
 * root S (P = S Sᵀ) and updated by a QR of [(F S)ᵀ; Kᵀ], so it stays symmetric positive
 * semi-definite by construction (the covariance form of Rauch, Tung &amp; Striebel 1965 gives the same
 * P in exact arithmetic, but not that guarantee).
 *
 * <p>Memory: the backward sweep saves its information every {@link #SEGMENT} samples; each segment's
 * noise rows are recomputed from the checkpoint at its end (a second backward pass over it), so the
 * smoother holds N/SEGMENT·s(s+1) + SEGMENT·n(n+s+1) doubles beside the trajectory it returns, and
 * costs about three times the backward sweep (the re-run, and a covariance QR per step).
 */
final class SmoothedTrajectory {
    /** Samples per recomputed segment: 1024 keeps both the checkpoints and one segment's rows near 1–2 MB at N = 10⁶, n = 10. */
    static final int SEGMENT = 1024;

    /** Receives the smoothed augmented state and its covariance square root at each sample, in time order. */
    interface Visitor {
        void visit(int k, double[] state, double[] root);
    }

    private final SolveContext ctx;
    private final NoiseSteps noise;
    private final int n;
    private final int s;
    private final int slot;
    private final double[] rows;
    private final int[] ranks;
    private final double[] x;
    private double[] root;
    private double[] nextRoot;
    private final double[] xi;
    private final double[] gain;
    private final double[] solved;
    private final double[] transition;
    private final double[] qrStack;
    private final double[] forced;
    private final double[] held;
    private final double[] nextState;

    SmoothedTrajectory(SolveContext ctx, NoiseSteps noise, double[] x0, double[] root0) {
        this.ctx = ctx;
        this.noise = noise;
        this.n = ctx.n;
        this.s = ctx.q;
        this.slot = n * (n + s + 1);
        this.rows = new double[SEGMENT * slot];
        this.ranks = new int[SEGMENT];
        this.x = x0.clone();
        this.root = root0.clone();
        this.nextRoot = new double[s * s];
        this.xi = new double[n];
        this.gain = new double[n * n];
        this.solved = new double[n * s];
        this.transition = new double[s * s];
        this.qrStack = new double[(s + n) * s];
        this.forced = new double[n];
        this.held = new double[Math.max(ctx.m, 1)];
        this.nextState = new double[n];
    }

    /** Checkpoint slots the backward sweep fills for N samples: one per SEGMENT samples, and the last sample. */
    static int checkpointCount(int samples) {
        return (samples - 1) / SEGMENT + 2;
    }

    /** The checkpoint slot of sample k, or −1 when the sweep keeps none there. */
    static int checkpointOf(int k, int samples) {
        if (k == samples - 1) {
            return checkpointCount(samples) - 1;
        }
        return k % SEGMENT == 0 ? k / SEGMENT : -1;
    }

    /** Walks samples 0 … N−1, visiting each with the smoothed state and covariance root. */
    void run(double[][] checkpoints, Visitor visitor) {
        int samples = ctx.trace.samples();
        visitor.visit(0, x, root);
        BackwardSweep sweep = new BackwardSweep(ctx, noise);
        for (int a = 0; a < samples - 1; a += SEGMENT) {
            int b = Math.min(a + SEGMENT, samples - 1);
            sweep.restore(checkpoints[checkpointOf(b, samples)]);
            for (int k = b - 1; k >= a; k--) {
                ranks[k - a] = sweep.stepBack(k, rows, (k - a) * slot);
                sweep.measure(k, null);
            }
            for (int k = a; k < b; k++) {
                step(k, ranks[k - a], (k - a) * slot);
                visitor.visit(k + 1, x, root);
            }
        }
    }

    /** x ← x̂_{k+1}, root ← S_{k+1} from the noise rows of the step from sample k. */
    private void step(int k, int r, int at) {
        int w = r + s + 1;
        long units = ctx.units(k + 1) - ctx.units(k);
        ZeroOrderHold.Step one = ctx.transitions.over(units);
        double[] g = noise.over(units).g();
        double[] phi = one.transition();
        for (int i = r - 1; i >= 0; i--) {
            double t = rows[at + i * w + w - 1];
            for (int c = 0; c < s; c++) {
                t -= rows[at + i * w + r + c] * x[c];
            }
            for (int c = i + 1; c < r; c++) {
                t -= rows[at + i * w + c] * xi[c];
            }
            xi[i] = t / rows[at + i * w + i];
        }
        solveNoiseRows(r, at, w);
        gainOf(g, r, at, w);
        advanceState(k, one, g, r);
        transitionMatrix(phi, g, r);
        propagateRoot(r);
    }

    /** solved ← R_ξ⁻¹ R_ξx (r × s), by back substitution column by column. */
    private void solveNoiseRows(int r, int at, int w) {
        for (int c = 0; c < s; c++) {
            for (int i = r - 1; i >= 0; i--) {
                double t = rows[at + i * w + r + c];
                for (int l = i + 1; l < r; l++) {
                    t -= rows[at + i * w + l] * solved[l * s + c];
                }
                solved[i * s + c] = t / rows[at + i * w + i];
            }
        }
    }

    /** gain ← G R_ξ⁻¹ (n × r), by forward substitution on each row (K R_ξ = G). */
    private void gainOf(double[] g, int r, int at, int w) {
        for (int l = 0; l < n; l++) {
            for (int c = 0; c < r; c++) {
                double t = g[l * r + c];
                for (int i = 0; i < c; i++) {
                    t -= gain[l * r + i] * rows[at + i * w + c];
                }
                gain[l * r + c] = t / rows[at + c * w + c];
            }
        }
    }

    /** States ← Φ x + Γ u_k + G ξ̂; offsets unchanged. */
    private void advanceState(int k, ZeroOrderHold.Step one, double[] g, int r) {
        int m = ctx.m;
        java.util.Arrays.fill(forced, 0.0);
        if (m > 0) {
            System.arraycopy(ctx.inputs, k * m, held, 0, m);
            Matrices.multiplyVector(one.input(), held, n, m, forced);
        }
        double[] phi = one.transition();
        double[] next = nextState;
        for (int i = 0; i < n; i++) {
            double v = forced[i];
            for (int c = 0; c < n; c++) {
                v += phi[i * n + c] * x[c];
            }
            for (int c = 0; c < r; c++) {
                v += g[i * r + c] * xi[c];
            }
            next[i] = v;
        }
        System.arraycopy(next, 0, x, 0, n);
    }

    /** transition ← F = Φ_aug − G_aug R_ξ⁻¹ R_ξx (s × s). */
    private void transitionMatrix(double[] phi, double[] g, int r) {
        java.util.Arrays.fill(transition, 0.0);
        for (int i = 0; i < n; i++) {
            System.arraycopy(phi, i * n, transition, i * s, n);
            for (int c = 0; c < s; c++) {
                double v = 0.0;
                for (int l = 0; l < r; l++) {
                    v += g[i * r + l] * solved[l * s + c];
                }
                transition[i * s + c] -= v;
            }
        }
        for (int i = n; i < s; i++) {
            transition[i * s + i] = 1.0;
        }
    }

    /** root ← Tᵀ (lower triangular) with T from the QR of [(F S)ᵀ; Kᵀ], so that TᵀT = F P Fᵀ + K Kᵀ. */
    private void propagateRoot(int r) {
        int rowsUsed = s + r;
        java.util.Arrays.fill(qrStack, 0, rowsUsed * s, 0.0);
        for (int i = 0; i < s; i++) {
            for (int j = 0; j < s; j++) {
                double v = 0.0;
                for (int l = 0; l < s; l++) {
                    v += transition[j * s + l] * root[l * s + i];
                }
                qrStack[i * s + j] = v;
            }
        }
        for (int c = 0; c < r; c++) {
            for (int i = 0; i < n; i++) {
                qrStack[(s + c) * s + i] = gain[i * r + c];
            }
        }
        StackedQr.triangularize(qrStack, rowsUsed, s, s);
        for (int i = 0; i < s; i++) {
            for (int j = 0; j < s; j++) {
                nextRoot[i * s + j] = j <= i ? qrStack[j * s + i] : 0.0;
            }
        }
        double[] swap = root;
        root = nextRoot;
        nextRoot = swap;
    }
}
