package backstate.estimation;

import java.util.LinkedHashMap;
import java.util.Map;

/**
 * The block route for uniformly sampled stretches. With one step h and no missing value, the
 * weighted equations of samples k … k+B−1 are H·diag(Φ(t_k − t0), I)·θ ≈ b with
 * H = [C Φ(h)^i / σ, I/σ]_{i&lt;B} the same for every block. H = Q R is factored once per step
 * length; each block then needs only Qᵀb (Householder reflectors, Golub &amp; Van Loan 2013,
 * Alg. 5.2.1) and folds the q reduced equations R·diag(Φ, I)·θ ≈ (Qᵀb)_{1..q} into the square-root
 * information, adding ‖(Qᵀb)_{q+1..}‖² to the residual — the same least-squares problem as folding
 * the B·p equations one by one (block sequential accumulation, Lawson &amp; Hanson 1974, ch. 27).
 *
 * <p>The sampled formulation needs neither b nor the split residual (its χ² comes from the
 * residual pass), and takes (Qᵀb)_{1..q} straight from the block's outputs and inputs
 * ({@link BlockProjection}); the continuous formulation, whose per-sample fit needs the split
 * residual, builds b by simulating the block and applies Qᵀ to it.
 */
final class UniformBlocks {
    /** Samples per block: enough that B·p ≥ q at the size limits and the per-block O(q³ + n³) is amortised. */
    static final int SAMPLES = 128;
    /** Returned by {@link #check} when the block starting at k is uniform. */
    static final int UNIFORM = -1;
    /** Factored blocks kept per distinct step length. */
    static final int PLANS = 8;
    /**
     * Memory the kept projections may hold per chunk: what {@link #PLANS} factored H take at the model
     * size limits (25 MB), so the projected route never holds more than the splitting one could.
     */
    static final long PROJECTION_BYTES = 25L << 20;

    private final SolveContext ctx;
    private final int end;
    private final boolean evenNeighbours;
    private final int rows;
    private final double[] b;
    private final double[] reduced;
    private final double[] scratch;
    private final double[] modelled;
    private final double[] liftedWork;
    private final double[] liftedOutputs;
    private final Map<Long, HouseholderQr> plans = new LinkedHashMap<>(16, 0.75f, true) {
        @Override
        protected boolean removeEldestEntry(Map.Entry<Long, HouseholderQr> eldest) {
            return size() > PLANS;
        }
    };
    /**
     * Projections by step length, on the sampled formulation's route; null on the continuous one's.
     * Each holds q·B·(p + m) + n·(n + (B−1)·m) doubles: 0.07 MB for the benchmark model, 8.4 MB at the
     * model size limits (against 3.1 MB for a factored H), so at most {@link #PLANS} and at most
     * {@link #PROJECTION_BYTES} of them are kept.
     */
    private final Map<Long, BlockProjection> projections;

    /**
     * @param end            one past the last sample a block may use
     * @param evenNeighbours a block also needs the samples just before and after it present, one
     *                       step away (so that every trapezoid weight in it is the same)
     */
    UniformBlocks(SolveContext ctx, int end, boolean evenNeighbours) {
        this.ctx = ctx;
        this.end = end;
        this.evenNeighbours = evenNeighbours;
        this.rows = SAMPLES * ctx.p;
        this.b = new double[rows];
        this.reduced = new double[ctx.q * ctx.q];
        this.scratch = ctx.stepScratch();
        this.modelled = new double[ctx.p];
        this.liftedWork = new double[ctx.n + LiftedStep.SAMPLES * ctx.m];
        this.liftedOutputs = new double[LiftedStep.SAMPLES * ctx.p];
        int kept = (int) Math.max(1, Math.min(PLANS, PROJECTION_BYTES / BlockProjection.bytes(ctx.n, ctx.p, ctx.m,
                ctx.q, SAMPLES)));
        this.projections = ctx.splitResiduals ? null : new LinkedHashMap<>(16, 0.75f, true) {
            @Override
            protected boolean removeEldestEntry(Map.Entry<Long, BlockProjection> eldest) {
                return size() > kept;
            }
        };
    }

    /**
     * {@link #UNIFORM} when samples k … k+B−1 exist, share one step and have every output present
     * (with even neighbours: so do samples k−1 and k+B, one step away); otherwise the first sample
     * index at which a block could next start.
     */
    int check(int k) {
        int blockEnd = k + SAMPLES;
        if (blockEnd > end) {
            return Integer.MAX_VALUE;
        }
        long step = ctx.units(k + 1) - ctx.units(k);
        long previous = ctx.units(k);
        for (int i = k; i < blockEnd; i++) {
            if (!allPresent(i)) {
                return i + 1;
            }
            long units = ctx.units(i);
            if (i > k && units - previous != step) {
                return i - 1;
            }
            previous = units;
        }
        return !evenNeighbours || evenStepTo(k, step) && evenStepTo(blockEnd, step) ? UNIFORM : k + 1;
    }

    /** True when sample i exists, has every output present, and lies one step of {@code step} units after sample i−1. */
    private boolean evenStepTo(int i, long step) {
        return i > 0 && i < ctx.trace.samples() && allPresent(i - 1) && allPresent(i)
                && ctx.units(i) - ctx.units(i - 1) == step;
    }

    private boolean allPresent(int i) {
        for (int j = 0; j < ctx.p; j++) {
            if (Double.isNaN(ctx.trace.output(i, j))) {
                return false;
            }
        }
        return true;
    }

    /**
     * Folds the uniform block starting at k, every equation of weight {@code weight}, where
     * phi = Φ(t_k − t0) and forced is the forced response at t_k; leaves forced at the block's last
     * sample and returns that sample's index.
     */
    int fold(int k, double[] phi, double[] forced, WeightedFactors factors, double weight, long[] counts) {
        long step = ctx.units(k + 1) - ctx.units(k);
        if (projections != null) {
            BlockProjection projection = projections.computeIfAbsent(step, this::project);
            projection.project(ctx.trace.outputsView(), ctx.inputs, k, forced, b);
            changeToInitialState(projection.r(), phi, ctx.n, ctx.q, reduced);
            factors.addReduced(reduced, b, ctx.q, rows, Double.NaN, weight);
        } else {
            HouseholderQr plan = plans.computeIfAbsent(step, this::factor);
            fillRightHandSide(k, step, forced);
            plan.applyTranspose(b);
            double split = 0.0;
            for (int i = ctx.q; i < rows; i++) {
                split += b[i] * b[i];
            }
            changeToInitialState(plan.r(), phi, ctx.n, ctx.q, reduced);
            factors.addReduced(reduced, b, ctx.q, rows, split, weight);
        }
        for (int j = 0; j < ctx.p; j++) {
            counts[j] += SAMPLES;
        }
        return k + SAMPLES - 1;
    }

    private BlockProjection project(long step) {
        double[] sigma = new double[ctx.p];
        for (int j = 0; j < ctx.p; j++) {
            sigma[j] = ctx.noise.sigma(j);
        }
        return new BlockProjection(factor(step), ctx.transitions.over(step), ctx.c, ctx.model.d(), sigma, ctx.n,
                ctx.q, SAMPLES);
    }

    /**
     * b = (y − C·forced − D·u)/σ per sample and channel, carrying forced through the block: not at
     * all without inputs (it stays zero), {@link LiftedStep#SAMPLES} samples a step where lifting
     * pays, else sample by sample.
     */
    private void fillRightHandSide(int k, long step, double[] forced) {
        if (ctx.m == 0) {
            for (int i = 0; i < SAMPLES; i++) {
                for (int j = 0; j < ctx.p; j++) {
                    b[i * ctx.p + j] = ctx.trace.output(k + i, j) / ctx.noise.sigma(j);
                }
            }
        } else if (ctx.lift) {
            fillLifted(k, step, forced);
        } else {
            fillStepByStep(k, step, forced);
        }
    }

    private void fillStepByStep(int k, long step, double[] forced) {
        ZeroOrderHold.Step transition = ctx.transitions.over(step);
        for (int i = 0; i < SAMPLES; i++) {
            int sample = k + i;
            if (i > 0) {
                ctx.propagate(forced, sample, transition, scratch);
            }
            ctx.outputs(forced, sample, scratch, modelled);
            weigh(i, sample, modelled, 0);
        }
    }

    /** Lifted steps; the last one stops at the block's last sample, one step at a time. */
    private void fillLifted(int k, long step, double[] forced) {
        LiftedStep lifted = ctx.transitions.lifted(step);
        int s = LiftedStep.SAMPLES;
        for (int i = 0; i < SAMPLES; i += s) {
            if (i + s < SAMPLES) {
                lifted.advance(forced, ctx.inputs, k + i, liftedWork, liftedOutputs);
            } else {
                lifted.outputsOnly(forced, ctx.inputs, k + i, liftedWork, liftedOutputs);
                ZeroOrderHold.Step transition = ctx.transitions.over(step);
                for (int j = 1; j < s; j++) {
                    ctx.propagate(forced, k + i + j, transition, scratch);
                }
            }
            for (int j = 0; j < s; j++) {
                weigh(i + j, k + i + j, liftedOutputs, j * ctx.p);
            }
        }
    }

    /** Row block i of b from sample {@code sample}'s outputs, modelled[at … at+p−1]. */
    private void weigh(int i, int sample, double[] modelled, int at) {
        for (int j = 0; j < ctx.p; j++) {
            b[i * ctx.p + j] = (ctx.trace.output(sample, j) - modelled[at + j]) / ctx.noise.sigma(j);
        }
    }

    /** R·diag(Φ, I) for upper-triangular q×q R and n×n Φ, row-major, into out: the change of unknowns to x0. */
    static void changeToInitialState(double[] r, double[] phi, int n, int q, double[] out) {
        for (int i = 0; i < q; i++) {
            for (int c = 0; c < n; c++) {
                double s = 0.0;
                for (int l = i; l < n; l++) {
                    s += r[i * q + l] * phi[l * n + c];
                }
                out[i * q + c] = s;
            }
            System.arraycopy(r, i * q + n, out, i * q + n, q - n);
        }
    }

    /** Factors H = [C Φ(h)^i / σ, I/σ]_{i&lt;B} (column-major, B·p × q). */
    private HouseholderQr factor(long step) {
        int n = ctx.n;
        int p = ctx.p;
        int q = ctx.q;
        double[] h = new double[rows * q];
        double[] transition = ctx.transitions.over(step).transition();
        double[] gi = ctx.c.clone();
        double[] next = new double[p * n];
        for (int i = 0; i < SAMPLES; i++) {
            for (int j = 0; j < p; j++) {
                double weight = 1.0 / ctx.noise.sigma(j);
                int r = i * p + j;
                for (int c = 0; c < n; c++) {
                    h[c * rows + r] = gi[j * n + c] * weight;
                }
                if (q > n) {
                    h[(n + j) * rows + r] = weight;
                }
            }
            Matrices.multiplyInto(gi, transition, p, n, n, next);
            double[] swap = gi;
            gi = next;
            next = swap;
        }
        return new HouseholderQr(h, rows, q);
    }
}
