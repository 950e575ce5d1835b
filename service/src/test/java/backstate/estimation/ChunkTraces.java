package backstate.estimation;

import java.util.Random;

/**
 * Traces that exercise every route of a chunked residual pass: uniform stretches (the block route
 * of {@link StateSweep}), jittered steps and gaps (the step-by-step route), two known inputs and a
 * feed-through, sensor offsets, missing values (scattered, on the chunk boundaries, and one channel
 * missing for a whole middle chunk), and a few 12σ spikes (outliers). Seeded, so deterministic.
 */
final class ChunkTraces {
    /** Samples: divisible by 2 and 3, so the chunk boundaries 2000, 3000, 4000 are known. */
    static final int SAMPLES = 6000;
    static final double[] SIGMA = {0.02, 0.05};
    static final double[] OFFSETS = {3.0, -1.5};

    private ChunkTraces() {
    }

    /** Two damped oscillators (0.3 and 0.1 /s, 2 and 5 rad/s), two inputs, two outputs with feed-through. */
    static StateSpaceModel continuous() {
        double[][] a = {{-0.3, 2.0, 0, 0}, {-2.0, -0.3, 0, 0}, {0, 0, -0.1, 5.0}, {0, 0, -5.0, -0.1}};
        double[][] b = {{1.0, 0.0}, {0.0, 0.5}, {0.3, 0.0}, {0.0, 1.0}};
        double[][] c = {{1.0, 0.0, 1.0, 0.0}, {0.0, 1.0, 0.5, -1.0}};
        double[][] d = {{0.1, 0.0}, {0.0, -0.2}};
        return StateSpaceModel.continuous(a, b, c, d, null);
    }

    /** A lightly damped rotation plus a slow pole, period 10 ms. */
    static StateSpaceModel discrete() {
        double[][] a = {{0.95, 0.1, 0.0}, {-0.1, 0.95, 0.0}, {0.0, 0.0, 0.99}};
        double[][] b = {{0.1, 0.0}, {0.0, 0.05}, {0.02, 0.02}};
        double[][] c = {{1.0, 0.0, 1.0}, {0.0, 1.0, -0.5}};
        double[][] d = {{0.1, 0.0}, {0.0, -0.2}};
        return StateSpaceModel.discrete(a, b, c, d, 0.01, null);
    }

    /** Initial state and offsets the trace is generated from: x0 then one offset per channel. */
    static double[] truth(StateSpaceModel model) {
        double[] x0 = {1.0, -0.5, 0.8, 0.3};
        double[] out = new double[model.states() + OFFSETS.length];
        System.arraycopy(x0, 0, out, 0, model.states());
        System.arraycopy(OFFSETS, 0, out, model.states(), OFFSETS.length);
        return out;
    }

    static Trace trace(StateSpaceModel model, long seed) {
        Random random = new Random(seed);
        double[] times = times(model, random);
        double[] inputs = inputs(random, SAMPLES);
        double[] outputs = noisyOutputs(model, times, inputs, random);
        for (int i = 0; i < 10; i++) {
            int k = random.nextInt(SAMPLES);
            outputs[k * 2] += 12 * SIGMA[0] * (random.nextBoolean() ? 1 : -1);
        }
        for (int i = 0; i < outputs.length; i++) {
            if (random.nextDouble() < 0.05) {
                outputs[i] = Double.NaN;
            }
        }
        for (int boundary : new int[] {2000, 3000, 4000}) {
            for (int k = boundary - 1; k <= boundary + 1; k++) {
                outputs[k * 2] = Double.NaN;
            }
        }
        for (int k = 1900; k < 4100; k++) {
            outputs[k * 2 + 1] = Double.NaN;
        }
        return new Trace(times, outputs, inputs, 2, 2, SIGMA);
    }

    /**
     * Continuous: 1 ms steps, a 37 ms gap, 1 ms ± 200 µs jitter, 2 ms steps with a 0.5 s gap, 1 ms.
     * Discrete: 1 period, a 7-period gap, 1–3 periods at random, 2 periods, 1 period.
     */
    private static double[] times(StateSpaceModel model, Random random) {
        boolean discrete = model.isDiscrete();
        double unit = discrete ? model.samplePeriod() : 1e-6;
        long[] units = new long[SAMPLES];
        for (int k = 1; k < SAMPLES; k++) {
            long step;
            if (k < 1500) {
                step = discrete ? 1 : 1000;
            } else if (k == 1500) {
                step = discrete ? 7 : 37_000;
            } else if (k < 2500) {
                step = discrete ? 1 + random.nextInt(3) : 800 + random.nextInt(401);
            } else if (k < 4200) {
                step = k == 3100 ? (discrete ? 50 : 500_000) : (discrete ? 2 : 2000);
            } else {
                step = discrete ? 1 : 1000;
            }
            units[k] = units[k - 1] + step;
        }
        double[] times = new double[SAMPLES];
        for (int k = 0; k < SAMPLES; k++) {
            times[k] = 10.0 + units[k] * unit;
        }
        return times;
    }

    /** Outputs of the model from {@link #truth} with {@link #OFFSETS} and noise {@link #SIGMA}, simulated step by step. */
    static double[] noisyOutputs(StateSpaceModel model, double[] times, double[] inputs, Random random) {
        int samples = times.length;
        Trace noiseless = new Trace(times, new double[samples * 2], inputs, 2, 2, SIGMA);
        SolveContext ctx = new SolveContext(model, noiseless, EstimationOptions.defaults());
        double[] x = java.util.Arrays.copyOf(truth(model), model.states());
        double[] scratch = ctx.stepScratch();
        double[] outputs = new double[samples * 2];
        double[] modelled = new double[2];
        for (int k = 0; k < samples; k++) {
            if (k > 0) {
                ctx.propagate(x, k, ctx.transitions.over(ctx.units(k) - ctx.units(k - 1)), scratch);
            }
            ctx.outputs(x, k, scratch, modelled);
            for (int j = 0; j < 2; j++) {
                outputs[k * 2 + j] = modelled[j] + OFFSETS[j] + SIGMA[j] * random.nextGaussian();
            }
        }
        return outputs;
    }

    /** A ±1 square wave switching every 250 samples and a random level held 40 samples. */
    static double[] inputs(Random random, int samples) {
        double[] u = new double[samples * 2];
        double level = 0.0;
        for (int k = 0; k < samples; k++) {
            if (k % 40 == 0) {
                level = random.nextGaussian();
            }
            u[k * 2] = (k / 250) % 2 == 0 ? 1.0 : -1.0;
            u[k * 2 + 1] = level;
        }
        return u;
    }

    /** Present samples per channel. */
    static long[] presentCounts(Trace trace) {
        long[] counts = new long[trace.outputCount()];
        for (int k = 0; k < trace.samples(); k++) {
            for (int j = 0; j < counts.length; j++) {
                if (!Double.isNaN(trace.output(k, j))) {
                    counts[j]++;
                }
            }
        }
        return counts;
    }
}
