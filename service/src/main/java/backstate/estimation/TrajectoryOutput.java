package backstate.estimation;

/**
 * What the smoothed trajectory reports: the kept series ({@link KeptSamples}: measured, fitted
 * and residual outputs from the smoothed state, the state with its standard errors and band), the
 * state at the window's last sample and at the reference sample, each with the smoothed covariance.
 */
final class TrajectoryOutput implements SmoothedTrajectory.Visitor {
    private final SolveContext ctx;
    private final StateUncertainty.Rule rule;
    private final int referenceSample;
    private final KeptSamples kept;
    private final int n;
    private final int p;
    private final int s;
    private final boolean keep;
    private final double[] times;
    private final double[] measured;
    private final double[] fitted;
    private final double[] residuals;
    private final double[] states;
    private final double[] se;
    private final double[] lower;
    private final double[] upper;
    private final double[] scratch;
    private final double[] outputs;
    private Estimate.StateAt reference;
    private Estimate.StateAt windowEnd;

    private TrajectoryOutput(SolveContext ctx, StateUncertainty.Rule rule, int referenceSample) {
        this.ctx = ctx;
        this.rule = rule;
        this.referenceSample = referenceSample;
        this.kept = new KeptSamples(ctx.trace.samples(), ctx.options.seriesStride());
        this.n = ctx.n;
        this.p = ctx.p;
        this.s = ctx.q;
        this.keep = ctx.options.keepSeries();
        int points = keep ? kept.count() : 0;
        this.times = new double[points];
        this.measured = new double[points * p];
        this.fitted = new double[points * p];
        this.residuals = new double[points * p];
        this.states = new double[points * n];
        this.se = new double[points * n];
        this.lower = new double[points * n];
        this.upper = new double[points * n];
        this.scratch = ctx.stepScratch();
        this.outputs = new double[p];
    }

    /** Runs the forward sweep from x̂0 (covariance root R0⁻¹) and collects its output. */
    static TrajectoryOutput run(SolveContext ctx, NoiseSteps noise, double[] x0, double[] rInverse,
                                double[][] checkpoints, StateUncertainty.Rule rule, int referenceSample) {
        TrajectoryOutput out = new TrajectoryOutput(ctx, rule, referenceSample);
        new SmoothedTrajectory(ctx, noise, x0, rInverse).run(checkpoints, out);
        return out;
    }

    @Override
    public void visit(int k, double[] state, double[] root) {
        int last = ctx.trace.samples() - 1;
        if (k == last) {
            windowEnd = stateAt(k, state, root);
        }
        if (k == referenceSample) {
            reference = stateAt(k, state, root);
        }
        int slot = keep ? kept.slotOf(k) : -1;
        if (slot >= 0) {
            keepPoint(slot, k, state, root);
        }
    }

    private void keepPoint(int i, int k, double[] state, double[] root) {
        times[i] = ctx.trace.time(k);
        ctx.outputs(state, k, scratch, outputs);
        for (int j = 0; j < p; j++) {
            double y = ctx.trace.output(k, j);
            double yHat = outputs[j] + (s > n ? state[n + j] : 0.0);
            measured[i * p + j] = y;
            fitted[i * p + j] = yHat;
            residuals[i * p + j] = y - yHat;
        }
        for (int r = 0; r < n; r++) {
            double variance = 0.0;
            for (int c = 0; c < s; c++) {
                variance += root[r * s + c] * root[r * s + c];
            }
            int at = i * n + r;
            states[at] = state[r];
            se[at] = Math.sqrt(variance);
            double half = rule.halfWidth(se[at]);
            lower[at] = state[r] - half;
            upper[at] = state[r] + half;
        }
    }

    private Estimate.StateAt stateAt(int k, double[] state, double[] root) {
        return stateAt(ctx, rule, k, state, root);
    }

    /** The state block of the augmented state at sample k and of its covariance S Sᵀ (S = root, s × s). */
    static Estimate.StateAt stateAt(SolveContext ctx, StateUncertainty.Rule rule, int k, double[] state, double[] root) {
        int n = ctx.n;
        int s = ctx.q;
        double[] pxx = new double[n * n];
        for (int i = 0; i < n; i++) {
            for (int j = i; j < n; j++) {
                double v = Matrices.dot(root, i * s, root, j * s, s);
                pxx[i * n + j] = v;
                pxx[j * n + i] = v;
            }
        }
        double[] x = java.util.Arrays.copyOf(state, n);
        return StateUncertainty.at(ctx.trace.time(k), x, Matrices.identity(n), pxx, n, rule);
    }

    Estimate.StateAt reference() {
        return reference;
    }

    Estimate.StateAt windowEnd() {
        return windowEnd;
    }

    Estimate.Series series() {
        return keep ? new Estimate.Series(times, measured, fitted, residuals, p, states, se, lower, upper, n,
                ctx.options.seriesStride()) : null;
    }
}
