package backstate.estimation;

/**
 * First pass over a trace: builds each present sample's weighted equation for the unknowns and
 * folds it into a {@link SquareRootInformation}. Per sample it updates G_k = C·Φ(t_k) by
 * G_k = G_{k−1}·Φ(h_k) (transitions of one A commute) and the known-input forced response, so
 * the cost is O(N·p·n²) and memory O(q² + p·n).
 */
final class EquationPass {
    private EquationPass() {
    }

    /** Accumulates every data equation; returns the information factor and per-channel counts. */
    static Result run(SolveContext ctx) {
        int n = ctx.n;
        int p = ctx.p;
        SquareRootInformation info = new SquareRootInformation(ctx.q);
        double[] g = ctx.c.clone();
        double[] gNext = new double[p * n];
        double[] forced = new double[n];
        double[] scratch = new double[n];
        double[] row = new double[ctx.q];
        long[] counts = new long[p];
        TrapezoidWeights trapezoid = ctx.options.formulation() == Formulation.CONTINUOUS
                ? new TrapezoidWeights(ctx.trace) : null;
        long previousUnits = 0;
        for (int k = 0; k < ctx.trace.samples(); k++) {
            long units = ctx.units(k);
            if (k > 0) {
                ZeroOrderHold.Step step = ctx.transitions.over(units - previousUnits);
                Matrices.multiplyInto(g, step.transition(), p, n, n, gNext);
                double[] swap = g;
                g = gNext;
                gNext = swap;
                ctx.propagate(forced, k, step, scratch);
            }
            previousUnits = units;
            for (int j = 0; j < p; j++) {
                double y = ctx.trace.output(k, j);
                if (Double.isNaN(y)) {
                    continue;
                }
                double weight = 1.0 / ctx.noise.sigma(j);
                if (trapezoid != null) {
                    weight *= Math.sqrt(trapezoid.weight(k, j));
                }
                fillRow(row, g, j, n, ctx.q, weight);
                info.add(row, (y - ctx.output(j, forced, k)) * weight);
                counts[j]++;
            }
        }
        return new Result(info, counts);
    }

    private static void fillRow(double[] row, double[] g, int j, int n, int q, double weight) {
        for (int i = 0; i < n; i++) {
            row[i] = g[j * n + i] * weight;
        }
        for (int i = n; i < q; i++) {
            row[i] = i - n == j ? weight : 0.0;
        }
    }

    /** The accumulated information and the number of present samples per channel. */
    record Result(SquareRootInformation information, long[] presentCounts) {
    }
}
