package backstate.estimation;

/**
 * First pass over a trace: builds each present sample's weighted equation for the unknowns and
 * folds it into a {@link SquareRootInformation}.
 *
 * <p>Per sample it updates G_k = C·Φ(t_k) by G_k = G_{k−1}·Φ(h_k) (transitions of one A commute)
 * and the known-input forced response: O(p·n²) per sample, memory O(q² + p·n). Stretches of
 * {@link UniformBlocks#SAMPLES} samples with one step length and no missing value take a faster
 * route (see {@link UniformBlocks}): O(q·(p + m) + n·m) per sample under the sampled formulation
 * ({@link BlockProjection}), O(p·q + n²) under the continuous one. All routes fold the same equations.
 * On the block route Φ(t_k) is carried from block start to block start, one n×n product per
 * block, and G is rebuilt from it only when a sample takes the per-sample route again.
 *
 * <p>Under the continuous formulation each equation also carries its trapezoid weight
 * ({@link TrapezoidWeights}) into {@link WeightedFactors}; inside an evenly sampled stretch whose
 * neighbours are one step away the weight is one constant, so such stretches take the block route
 * too, with the block's reduced rows scaled by that constant.
 */
final class EquationPass {
    private final SolveContext ctx;
    private final int start;
    private final int end;
    private final int n;
    private final int p;
    private final WeightedFactors factors;
    private final long[] counts;
    private final double[] row;
    private final double[] scratch;
    private final double[] modelled;
    private final TrapezoidWeights trapezoid;
    private final UniformBlocks blocks;
    private double[] g;
    private double[] gNext;
    private final double[] forced;
    /** Φ(t − t_start) at {@link #phiUnits} while on the block route; null when not tracked (the per-sample route never needs it). */
    private double[] phi;
    private double[] phiNext;
    private long phiUnits;
    /** False after a block, whose last sample leaves G behind; the per-sample route then rebuilds it from Φ. */
    private boolean gCurrent = true;

    private EquationPass(SolveContext ctx, int start, int end) {
        this.ctx = ctx;
        this.start = start;
        this.end = end;
        this.n = ctx.n;
        this.p = ctx.p;
        boolean continuous = ctx.options.formulation() == Formulation.CONTINUOUS;
        this.factors = WeightedFactors.create(ctx.q, continuous);
        this.counts = new long[p];
        this.row = new double[ctx.q];
        this.scratch = ctx.stepScratch();
        this.modelled = new double[p];
        this.g = ctx.c.clone();
        this.gNext = new double[p * n];
        this.phiNext = new double[n * n];
        this.forced = new double[n];
        this.trapezoid = continuous ? new TrapezoidWeights(ctx, start) : null;
        this.blocks = new UniformBlocks(ctx, end, continuous);
    }

    /** Accumulates every data equation; returns the information factor and per-channel counts. */
    static Result run(SolveContext ctx) {
        return run(ctx, 0, ctx.trace.samples());
    }

    /**
     * Accumulates the equations of samples start … end−1 in the chunk's own coordinates: the
     * unknown state is the one at t_start and the forced response starts from zero there, so
     * chunks can run in parallel and be joined by {@link ChunkedEquations}.
     */
    static Result run(SolveContext ctx, int start, int end) {
        return new EquationPass(ctx, start, end).walk();
    }

    private Result walk() {
        long startUnits = ctx.units(start);
        long previousUnits = startUnits;
        int nextBlockTry = start;
        int k = start;
        while (k < end) {
            long units = ctx.units(k);
            if (k > start) {
                advance(k, ctx.transitions.over(units - previousUnits));
            }
            if (k >= nextBlockTry) {
                int outcome = blocks.check(k);
                if (outcome == UniformBlocks.UNIFORM) {
                    k = foldBlock(k, units - startUnits);
                    previousUnits = ctx.units(k);
                    k++;
                    continue;
                }
                nextBlockTry = outcome;
            }
            addSample(k, units - startUnits);
            previousUnits = units;
            k++;
        }
        return new Result(factors, counts, forced.clone(), null);
    }

    /** Steps G (when current) and the forced response from sample k−1 to k. */
    private void advance(int k, ZeroOrderHold.Step step) {
        if (gCurrent) {
            Matrices.multiplyInto(g, step.transition(), p, n, n, gNext);
            double[] swap = g;
            g = gNext;
            gNext = swap;
        }
        ctx.propagate(forced, k, step, scratch);
    }

    /** Folds samples k … k+B−1 as one block; returns the block's last sample, with the forced response there. */
    private int foldBlock(int k, long unitsFromStart) {
        double weight = 1.0;
        if (trapezoid != null) {
            weight = trapezoid.interior(ctx.units(k + 1) - ctx.units(k));
        }
        int last = blocks.fold(k, phiAt(unitsFromStart), forced, factors, weight, counts);
        if (trapezoid != null) {
            trapezoid.skipTo(last);
        }
        gCurrent = false;
        return last;
    }

    /** Φ(t − t_start) at {@code unitsFromStart} step units, from the tracked Φ when there is one. */
    private double[] phiAt(long unitsFromStart) {
        if (phi == null) {
            phi = unitsFromStart == 0 ? Matrices.identity(n) : ctx.transitions.fresh(unitsFromStart).transition();
        } else if (unitsFromStart != phiUnits) {
            Matrices.multiplyInto(phi, ctx.transitions.over(unitsFromStart - phiUnits).transition(), n, n, n, phiNext);
            double[] swap = phi;
            phi = phiNext;
            phiNext = swap;
        }
        phiUnits = unitsFromStart;
        return phi;
    }

    private void addSample(int k, long unitsFromStart) {
        if (!gCurrent) {
            Matrices.multiplyInto(ctx.c, phiAt(unitsFromStart), p, n, n, g);
            gCurrent = true;
        }
        phi = null;
        ctx.outputs(forced, k, scratch, modelled);
        for (int j = 0; j < p; j++) {
            double y = ctx.trace.output(k, j);
            if (Double.isNaN(y)) {
                continue;
            }
            double whitening = 1.0 / ctx.noise.sigma(j);
            fillRow(j, whitening);
            factors.add(row, (y - modelled[j]) * whitening, trapezoid == null ? 1.0 : trapezoid.weight(k, j));
            counts[j]++;
        }
    }

    private void fillRow(int j, double weight) {
        for (int i = 0; i < n; i++) {
            row[i] = g[j * n + i] * weight;
        }
        for (int i = n; i < ctx.q; i++) {
            row[i] = i - n == j ? weight : 0.0;
        }
    }

    /**
     * The accumulated factors, the number of present samples per channel, the forced response at
     * the last sample, and where chunks were joined ({@link ChunkedEquations}), else null.
     */
    record Result(WeightedFactors factors, long[] presentCounts, double[] forcedAtLast, ChunkStart join) {
    }

    /**
     * A chunk's first sample, with Φ(t_sample − t0) and the forced state there (from zero at t0):
     * the state there is Φ·x0 + forced, for any x0.
     */
    record ChunkStart(int sample, double[] transition, double[] forced) {
        /** The state at {@link #sample} from the state x0 at the first sample (its first n entries). */
        double[] stateFrom(double[] x0, int n) {
            double[] state = new double[n];
            Matrices.multiplyVector(transition, x0, n, n, state);
            for (int i = 0; i < n; i++) {
                state[i] += forced[i];
            }
            return state;
        }
    }
}
