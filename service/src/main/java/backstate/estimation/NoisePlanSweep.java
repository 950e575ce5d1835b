package backstate.estimation;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;

/**
 * Planning for a model that declares process noise: the covariance x̂0 would get from a plan's
 * samples under the process-noise formulation. As without noise, the information about x0 does not
 * depend on the data, so it is the backward square-root information sweep of the smoother
 * ({@link BackwardSweep}) run over the plan's sample times with the subset's outputs present and
 * the others missing (values are irrelevant and set to 0). The sweep starts at the window's last
 * sample, so each horizon is its own pass: the work is the sum of the horizons' samples, bounded by
 * {@link #MAX_STEPS}.
 */
final class NoisePlanSweep {
    /**
     * Most sample steps (summed over horizons and subsets) one plan with process noise may take: each
     * step is a QR of an (n + r)-column stack, about 20 µs at n = 10, so 10⁵ keeps a synchronous
     * request to a few seconds.
     */
    static final long MAX_STEPS = 100_000;

    private NoisePlanSweep() {
    }

    /** Refuses a plan whose passes would exceed {@link #MAX_STEPS}, naming {@code horizons}. */
    static void requireBounded(long[] samples, int subsets) {
        long total = 0;
        for (long s : samples) {
            total += s;
        }
        if (total * subsets > MAX_STEPS) {
            throw new ModelException("horizons", "got " + total * subsets + " sample steps over all horizons and subsets,"
                    + " expected at most " + MAX_STEPS + " for a model with process noise (each horizon is its own"
                    + " pass): ask for fewer or shorter horizons, or a longer samplePeriod");
        }
    }

    /** One prediction per horizon for the outputs of one subset. */
    static List<SamplingPlanner.Prediction> sweep(StateSpaceModel model, SamplingPlanner.Plan plan, int[] outputs,
                                                  long[] samples) {
        List<SamplingPlanner.Prediction> out = new ArrayList<>();
        for (int i = 0; i < samples.length; i++) {
            int count = (int) samples[i];
            Trace trace = planTrace(model, plan, outputs, count);
            SolveContext ctx = new SolveContext(model, trace, EstimationOptions.defaults()
                    .withFormulation(Formulation.PROCESS_NOISE).withKeepSeries(false));
            BackwardSweep sweep = new BackwardSweep(ctx, new NoiseSteps(ctx));
            for (int k = count - 1; k >= 0; k--) {
                if (k < count - 1) {
                    sweep.stepBack(k, null, 0);
                }
                sweep.measure(k, null);
            }
            double[] r = ProcessNoiseSmoother.factorOf(sweep.info(), ctx.q);
            SamplingPlanner.requireFinite(r, i, plan.horizons()[i]);
            out.add(SamplingPlanner.predict(r, ctx.q, sweep.equations(), plan.horizons()[i], count,
                    plan.targetStdErrors()));
        }
        return out;
    }

    /** Samples k·T, k &lt; count: the subset's outputs present (0), the others missing; inputs 0. */
    private static Trace planTrace(StateSpaceModel model, SamplingPlanner.Plan plan, int[] outputs, int count) {
        int p = model.outputs();
        double[] times = new double[count];
        double[] values = new double[count * p];
        Arrays.fill(values, Double.NaN);
        double[] sigma = new double[p];
        Arrays.fill(sigma, 1.0);
        for (int o : outputs) {
            sigma[o] = plan.noiseSigma()[o];
        }
        for (int k = 0; k < count; k++) {
            times[k] = k * plan.samplePeriod();
            for (int o : outputs) {
                values[k * p + o] = 0.0;
            }
        }
        return new Trace(times, values, new double[count * model.inputs()], p, model.inputs(), sigma);
    }
}
