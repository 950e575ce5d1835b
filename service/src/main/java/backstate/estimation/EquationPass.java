package backstate.estimation;

/**
 * First pass over a trace: builds each present sample's weighted equation for the unknowns and
 * folds it into a {@link SquareRootInformation}.
 *
 * <p>Per sample it updates G_k = C·Φ(t_k) by G_k = G_{k−1}·Φ(h_k) (transitions of one A commute)
 * and the known-input forced response: O(p·n²) per sample, memory O(q² + p·n). Stretches of
 * {@link UniformBlocks#SAMPLES} samples with one step length and no missing value take a faster
 * route (see {@link UniformBlocks}): O(p·q + n²) per sample. Both routes fold the same equations.
 */
final class EquationPass {
    private final SolveContext ctx;
    private final int start;
    private final int end;
    private final int n;
    private final int p;
    private final SquareRootInformation info;
    private final long[] counts;
    private final double[] row;
    private final double[] scratch;
    private final TrapezoidWeights trapezoid;
    private final UniformBlocks blocks;
    private double[] g;
    private double[] gNext;
    private final double[] forced;
    /** Φ(t_k − t0) while on the block route; null when not tracked (the per-sample route never needs it). */
    private double[] phi;

    private EquationPass(SolveContext ctx, int start, int end) {
        this.ctx = ctx;
        this.start = start;
        this.end = end;
        this.n = ctx.n;
        this.p = ctx.p;
        this.info = new SquareRootInformation(ctx.q);
        this.counts = new long[p];
        this.row = new double[ctx.q];
        this.scratch = new double[n];
        this.g = ctx.c.clone();
        this.gNext = new double[p * n];
        this.forced = new double[n];
        boolean continuous = ctx.options.formulation() == Formulation.CONTINUOUS;
        this.trapezoid = continuous ? new TrapezoidWeights(ctx.trace, start) : null;
        this.blocks = continuous ? null : new UniformBlocks(ctx, end);
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
            if (blocks != null && k >= nextBlockTry) {
                int outcome = blocks.check(k);
                if (outcome == UniformBlocks.UNIFORM) {
                    k = foldBlock(k, units - startUnits);
                    previousUnits = ctx.units(k);
                    k++;
                    continue;
                }
                nextBlockTry = outcome;
            }
            phi = null;
            addSample(k);
            previousUnits = units;
            k++;
        }
        return new Result(info, counts, forced.clone());
    }

    /** Steps G, the forced response and (when tracked) Φ from sample k−1 to k. */
    private void advance(int k, ZeroOrderHold.Step step) {
        Matrices.multiplyInto(g, step.transition(), p, n, n, gNext);
        double[] swap = g;
        g = gNext;
        gNext = swap;
        ctx.propagate(forced, k, step, scratch);
        if (phi != null) {
            phi = Matrices.multiply(phi, step.transition(), n, n, n);
        }
    }

    /** Folds samples k … k+B−1 as one block; returns the block's last sample, with G and forced there. */
    private int foldBlock(int k, long unitsFromStart) {
        if (phi == null) {
            phi = unitsFromStart == 0 ? Matrices.identity(n) : ctx.transitions.fresh(unitsFromStart).transition();
        }
        int last = blocks.fold(k, phi, forced, info, counts);
        phi = Matrices.multiply(phi, blocks.span(k), n, n, n);
        Matrices.multiplyInto(ctx.c, phi, p, n, n, g);
        return last;
    }

    private void addSample(int k) {
        for (int j = 0; j < p; j++) {
            double y = ctx.trace.output(k, j);
            if (Double.isNaN(y)) {
                continue;
            }
            double weight = 1.0 / ctx.noise.sigma(j);
            if (trapezoid != null) {
                weight *= Math.sqrt(trapezoid.weight(k, j));
            }
            fillRow(j, weight);
            info.add(row, (y - ctx.output(j, forced, k)) * weight);
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

    /** The accumulated information, the number of present samples per channel, and the forced response at the last sample. */
    record Result(SquareRootInformation information, long[] presentCounts, double[] forcedAtLast) {
    }
}
