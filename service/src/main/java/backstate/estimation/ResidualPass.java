package backstate.estimation;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;

/**
 * Second pass over a trace: simulates the fitted model from x̂0 with the known inputs, and streams
 * the residuals into per-channel diagnostics, the optional fitted/residual series, and the state
 * at the reference time. O(N·n²) time; O(n² + p) memory unless the series is kept.
 */
final class ResidualPass {
    private ResidualPass() {
    }

    static Result run(SolveContext ctx, double[] solution, long[] presentCounts) {
        int n = ctx.n;
        int p = ctx.p;
        int samples = ctx.trace.samples();
        boolean keep = ctx.options.keepSeries();
        double[] fitted = keep ? new double[samples * p] : null;
        double[] residuals = keep ? new double[samples * p] : null;
        ChannelAccumulator[] channels = new ChannelAccumulator[p];
        for (int j = 0; j < p; j++) {
            channels[j] = new ChannelAccumulator(ctx.noise.sigma(j), presentCounts[j]);
        }
        Double referenceTime = ctx.options.referenceTime();
        double[] state = Arrays.copyOf(solution, n);
        double[] scratch = new double[n];
        double[] referenceState = null;
        long previousUnits = 0;
        for (int k = 0; k < samples; k++) {
            long units = ctx.units(k);
            if (k > 0) {
                ctx.propagate(state, k, ctx.transitions.over(units - previousUnits), scratch);
            }
            previousUnits = units;
            if (referenceTime != null && referenceState == null && endsReferenceInterval(ctx, k, referenceTime)) {
                referenceState = stateAt(ctx, k, units, state, referenceTime);
            }
            for (int j = 0; j < p; j++) {
                double yHat = ctx.output(j, state, k) + offset(ctx, solution, j);
                double y = ctx.trace.output(k, j);
                double r = y - yHat;
                if (!Double.isNaN(y)) {
                    channels[j].add(y, r);
                }
                if (keep) {
                    fitted[k * p + j] = yHat;
                    residuals[k * p + j] = r;
                }
            }
        }
        List<ChannelDiagnostics> diagnostics = new ArrayList<>(p);
        for (int j = 0; j < p; j++) {
            diagnostics.add(channels[j].finish(ctx.noise.source(j)));
        }
        Estimate.Series series = keep ? new Estimate.Series(times(ctx.trace), fitted, residuals, p) : null;
        return new Result(diagnostics, series, referenceState);
    }

    /** True when sample k is the last sample at or before the reference time. */
    private static boolean endsReferenceInterval(SolveContext ctx, int k, double referenceTime) {
        return k == ctx.trace.samples() - 1 || ctx.trace.time(k + 1) > referenceTime;
    }

    /** x̂(t_ref) = Φ(t_ref − t_k) x̂_k + Γ(t_ref − t_k) u_k: the held input carries on past sample k. */
    private static double[] stateAt(SolveContext ctx, int k, long unitsAtK, double[] stateAtK, double time) {
        long gap = ctx.steps.unitsFromStart(time, "referenceTime") - unitsAtK;
        double[] x = stateAtK.clone();
        if (gap > 0) {
            ZeroOrderHold.Step step = ctx.transitions.over(gap);
            double[] out = new double[ctx.n];
            Matrices.multiplyVector(step.transition(), stateAtK, ctx.n, ctx.n, out);
            double[] bd = step.input();
            for (int i = 0; i < ctx.n; i++) {
                for (int l = 0; l < ctx.m; l++) {
                    out[i] += bd[i * ctx.m + l] * ctx.trace.input(k, l);
                }
            }
            x = out;
        }
        return x;
    }

    private static double offset(SolveContext ctx, double[] solution, int j) {
        return ctx.q > ctx.n ? solution[ctx.n + j] : 0.0;
    }

    private static double[] times(Trace trace) {
        double[] out = new double[trace.samples()];
        for (int k = 0; k < out.length; k++) {
            out[k] = trace.time(k);
        }
        return out;
    }

    record Result(List<ChannelDiagnostics> channels, Estimate.Series series, double[] referenceState) {
    }
}
