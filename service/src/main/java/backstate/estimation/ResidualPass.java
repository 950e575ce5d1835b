package backstate.estimation;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.concurrent.ForkJoinTask;

/**
 * Second pass over a trace: simulates the fitted model from x̂0 with the known inputs, and streams
 * the residuals into per-channel diagnostics, the optional fitted/residual series, and the state
 * at the reference time. O(N·n²) time; O(n² + p) memory unless the series is kept. Where
 * {@link LiftedStep#pays lifting pays}, runs of {@link LiftedStep#SAMPLES} equal steps go as one
 * lifted step (the outputs and the next state by two products), other samples one step at a time.
 *
 * <p>Long traces (N ≥ {@link #PARALLEL_MIN_SAMPLES}) run as {@link #PARALLEL_CHUNKS} contiguous
 * chunks on two threads. A chunk needs the true state at its first sample, which depends on every
 * earlier input; it comes from {@link StateSweep}, a state-only simulation by blocks of equal
 * steps, run on the caller before the chunks start, unless the equation pass was joined at the
 * same sample and hands on the state there ({@link EquationPass.ChunkStart}: Φ(t_m − t0)·x̂0 + f_m,
 * no sweep). Each chunk then simulates its own range from
 * its start state and streams into its own accumulators and its own range of the series arrays,
 * and the accumulators are joined in trace order ({@link ChannelAccumulator#append}). Wall time ≈
 * sweep to the last chunk start + N/C samples of this pass. Measured on the benchmark model
 * (n = 10, p = 3, m = 2, N = 10⁶, 2 cores, min of 15): one chunk 112 ms; two chunks 62 ms (0.55),
 * of which the sweep to N/2 is 4.7 ms. Sweeping step by step instead (re-simulating the forced
 * response of the earlier chunk and adding the free response) takes 32 ms to N/2, ≈ 0.8 overall.
 *
 * <p>Equivalence: a chunked pass computes the same quantities as one chunk, but its start states
 * and the joined sums are rounded differently, so results agree to rounding, not bit for bit. On
 * the benchmark (N = 10⁶): fitted values and the reference state within 1e-13 of their scale,
 * RMS and R² within 3e-15, Ljung–Box Q within 2e-12 (Q measures correlations of size 1/√N, so a
 * residual change δr moves it by ≈ δr/σ, not δr/r), outlier counts equal. One chunk is the same
 * loop as before chunking, bit for bit.
 *
 * <p>Threads: the caller runs chunk 0 while the other chunks are forked to the JDK's common
 * fork-join pool (a worker's own pool when called from one), so there is no pool of our own to
 * size or shut down and no static state. A chunk never waits on anything, and a caller that joins
 * a chunk no worker has taken yet runs it itself, so a busy or single-thread pool only costs
 * parallelism. Each chunk has its own {@link TransitionCache}, which is not thread-safe; chunk 0
 * uses the context's, on the caller's thread. join() orders every chunk's writes to the series
 * arrays before the caller reads them.
 */
final class ResidualPass {
    /**
     * Traces at least this long are split, as the equation pass splits them. Two chunks pay off
     * from about 10⁴ samples (1.1 → 0.7 ms) but save under 5 ms below 10⁵, where a job server
     * running several jobs side by side gets more from the second core than one job does.
     */
    static final int PARALLEL_MIN_SAMPLES = ChunkedEquations.PARALLEL_FROM_SAMPLES;
    /**
     * Chunks of a long trace: the two cores of the deployment target. Fixed rather than read from
     * the machine, so that a trace's diagnostics do not depend on where it was solved.
     */
    static final int PARALLEL_CHUNKS = 2;

    private final SolveContext ctx;
    private final double[] solution;
    private final long[] presentCounts;
    private final KeptSamples kept;
    private final double[] measured;
    private final double[] fitted;
    private final double[] residuals;
    private final double[] states;
    private final Double referenceTime;
    private final long referenceUnits;

    private ResidualPass(SolveContext ctx, double[] solution, long[] presentCounts) {
        this.ctx = ctx;
        this.solution = solution;
        this.presentCounts = presentCounts;
        this.kept = new KeptSamples(ctx.trace.samples(), ctx.options.seriesStride());
        boolean keep = ctx.options.keepSeries();
        int points = kept.count();
        this.measured = keep ? new double[points * ctx.p] : null;
        this.fitted = keep ? new double[points * ctx.p] : null;
        this.residuals = keep ? new double[points * ctx.p] : null;
        this.states = keep ? new double[points * ctx.n] : null;
        this.referenceTime = ctx.options.referenceTime();
        this.referenceUnits = referenceTime == null ? 0 : ctx.steps.unitsFromStart(referenceTime, "referenceTime");
    }

    static Result run(SolveContext ctx, double[] solution, long[] presentCounts) {
        return run(ctx, solution, presentCounts, chunksFor(ctx.trace.samples()));
    }

    /**
     * As {@link #run(SolveContext, double[], long[])}, taking the state at {@code join}'s sample from
     * the equation pass (Φ·x̂0 + f, exact) instead of sweeping to it, when that sample is where the
     * second chunk starts.
     */
    static Result run(SolveContext ctx, double[] solution, long[] presentCounts, EquationPass.ChunkStart join) {
        int chunks = chunksFor(ctx.trace.samples());
        return new ResidualPass(ctx, solution, presentCounts).run(chunks, join);
    }

    /** Chunks used for a trace of this many samples. */
    static int chunksFor(int samples) {
        return samples >= PARALLEL_MIN_SAMPLES ? PARALLEL_CHUNKS : 1;
    }

    /** As {@link #run(SolveContext, double[], long[])} with a chosen number of chunks, 1 ≤ chunks ≤ N. */
    static Result run(SolveContext ctx, double[] solution, long[] presentCounts, int chunks) {
        int samples = ctx.trace.samples();
        if (chunks < 1 || chunks > samples) {
            throw new IllegalArgumentException("chunks: got " + chunks + ", expected 1 to " + samples
                    + " (the number of samples)");
        }
        return new ResidualPass(ctx, solution, presentCounts).run(chunks, null);
    }

    private Result run(int chunks, EquationPass.ChunkStart join) {
        int samples = ctx.trace.samples();
        Chunk[] done = new Chunk[chunks];
        if (chunks == 1) {
            done[0] = simulate(ctx.transitions, 0, samples, Arrays.copyOf(solution, ctx.n));
        } else {
            int[] bounds = new int[chunks + 1];
            for (int c = 0; c <= chunks; c++) {
                bounds[c] = (int) ((long) samples * c / chunks);
            }
            double[][] starts = chunks == 2 && join != null && join.sample() == bounds[1]
                    ? new double[][] {Arrays.copyOf(solution, ctx.n), join.stateFrom(solution, ctx.n)}
                    : StateSweep.statesAt(ctx, ctx.transitions, Arrays.copyOf(solution, ctx.n),
                            Arrays.copyOf(bounds, chunks));
            List<ForkJoinTask<Chunk>> forked = new ArrayList<>(chunks - 1);
            for (int c = 1; c < chunks; c++) {
                int from = bounds[c];
                int to = bounds[c + 1];
                double[] start = starts[c];
                // The running state is cloned on the worker: the starts were made here side by side, and
                // two threads writing their states into one cache line every sample doubled the pass's time.
                forked.add(ForkJoinTask.adapt(
                        () -> simulate(new TransitionCache(ctx.model, ctx.steps), from, to, start.clone())).fork());
            }
            done[0] = simulate(ctx.transitions, 0, bounds[1], starts[0]);
            for (int c = 1; c < chunks; c++) {
                done[c] = forked.get(c - 1).join();
            }
        }
        return finish(done);
    }

    private Result finish(Chunk[] done) {
        ChannelAccumulator[] channels = done[0].channels();
        double[] referenceState = done[0].referenceState();
        for (int c = 1; c < done.length; c++) {
            for (int j = 0; j < ctx.p; j++) {
                channels[j].append(done[c].channels()[j]);
            }
            if (referenceState == null) {
                referenceState = done[c].referenceState();
            }
        }
        List<ChannelDiagnostics> diagnostics = new ArrayList<>(ctx.p);
        double whitened = 0.0;
        for (int j = 0; j < ctx.p; j++) {
            diagnostics.add(channels[j].finish(ctx.noise.source(j)));
            double sigma = ctx.noise.sigma(j);
            whitened += channels[j].residualSquares() / (sigma * sigma);
        }
        Kept series = fitted == null ? null : new Kept(kept, keptTimes(), measured, fitted, residuals, states);
        return new Result(diagnostics, series, referenceState, done[done.length - 1].endState(), whitened);
    }

    /**
     * Samples [from, to) from the state {@code state} at sample {@code from} (overwritten): runs of
     * {@link LiftedStep#SAMPLES} equal steps go as one lifted step where lifting pays, other samples
     * one step at a time.
     */
    private Chunk simulate(TransitionCache transitions, int from, int to, double[] state) {
        int p = ctx.p;
        int lift = LiftedStep.SAMPLES;
        ChannelAccumulator[] accumulators = new ChannelAccumulator[p];
        for (int j = 0; j < p; j++) {
            accumulators[j] = new ChannelAccumulator(ctx.noise.sigma(j), presentCounts[j]);
        }
        Gathered channels = new Gathered(accumulators);
        double[] scratch = ctx.stepScratch();
        double[] modelled = new double[lift * p];
        double[] liftedWork = new double[ctx.n + lift * ctx.m];
        double[] referenceState = null;
        int k = from;
        while (k < to) {
            long unitsK = ctx.units(k);
            long step = k + 1 < to ? ctx.units(k + 1) - unitsK : 0;
            if (ctx.lift && k + lift < to && ctx.equalSteps(k, unitsK, step, lift) == lift && !holdsReferenceSample(k, lift)
                    && !holdsKeptState(k, lift)) {
                transitions.lifted(step).advance(state, ctx.inputs, k, liftedWork, modelled);
                for (int i = 0; i < lift; i++) {
                    record(k + i, modelled, i * p, channels);
                }
                k += lift;
                continue;
            }
            if (referenceTime != null && referenceState == null && isReferenceSample(k)) {
                referenceState = stateAt(transitions, k, unitsK, state);
            }
            ctx.outputs(state, k, scratch, modelled);
            record(k, modelled, 0, channels);
            int slot = states == null ? -1 : kept.slotOf(k);
            if (slot >= 0) {
                System.arraycopy(state, 0, states, slot * ctx.n, ctx.n);
            }
            if (k + 1 < to) {
                ctx.propagate(state, k + 1, transitions.over(step), scratch);
            }
            k++;
        }
        channels.drain();
        return new Chunk(accumulators, referenceState, state);
    }

    /**
     * Present samples' measured values and residuals gathered per channel and handed to the
     * accumulators {@link ChannelAccumulator#BATCH} at a time ({@link ChannelAccumulator#addAll}:
     * the same sums in the same order as value by value, with the running figures in locals).
     */
    private static final class Gathered {
        private final ChannelAccumulator[] accumulators;
        private final double[][] measured;
        private final double[][] residuals;
        private final int[] filled;

        Gathered(ChannelAccumulator[] accumulators) {
            this.accumulators = accumulators;
            int p = accumulators.length;
            this.measured = new double[p][ChannelAccumulator.BATCH];
            this.residuals = new double[p][ChannelAccumulator.BATCH];
            this.filled = new int[p];
        }

        void add(int j, double y, double r) {
            int i = filled[j];
            measured[j][i] = y;
            residuals[j][i] = r;
            i++;
            if (i == ChannelAccumulator.BATCH) {
                accumulators[j].addAll(measured[j], residuals[j], 0, i);
                i = 0;
            }
            filled[j] = i;
        }

        void drain() {
            for (int j = 0; j < accumulators.length; j++) {
                accumulators[j].addAll(measured[j], residuals[j], 0, filled[j]);
                filled[j] = 0;
            }
        }
    }

    /** True when the series is kept and one of samples k … k+count−1 is a kept one, whose state must be seen. */
    private boolean holdsKeptState(int k, int count) {
        return states != null && kept.anyIn(k, count);
    }

    /**
     * True when a reference time is asked for and its sample (the last at or before it) is one of
     * k … k+count−1, that is t_k ≤ t_ref &lt; t_{k+count}; that sample's state must be seen, so the
     * stretch goes one step at a time.
     */
    private boolean holdsReferenceSample(int k, int count) {
        return referenceTime != null && ctx.trace.time(k) <= referenceTime && ctx.trace.time(k + count) > referenceTime;
    }

    /** Streams sample k's outputs, modelled[at … at+p−1] before offsets, into the channels and the kept series. */
    private void record(int k, double[] modelled, int at, Gathered channels) {
        int p = ctx.p;
        int keptSlot = fitted == null ? -1 : kept.slotOf(k);
        for (int j = 0; j < p; j++) {
            double yHat = modelled[at + j] + offset(j);
            double y = ctx.trace.output(k, j);
            double r = y - yHat;
            if (!Double.isNaN(y)) {
                channels.add(j, y, r);
            }
            if (keptSlot >= 0) {
                int slot = keptSlot * p + j;
                measured[slot] = y;
                fitted[slot] = yHat;
                residuals[slot] = r;
            }
        }
    }

    /** True for the last sample at or before the reference time (t_0 ≤ t_ref is validated). */
    private boolean isReferenceSample(int k) {
        return ctx.trace.time(k) <= referenceTime
                && (k == ctx.trace.samples() - 1 || ctx.trace.time(k + 1) > referenceTime);
    }

    /** x̂(t_ref) = Φ(t_ref − t_k) x̂_k + Γ(t_ref − t_k) u_k: the held input carries on past sample k. */
    private double[] stateAt(TransitionCache transitions, int k, long unitsAtK, double[] stateAtK) {
        long gap = referenceUnits - unitsAtK;
        double[] x = stateAtK.clone();
        if (gap > 0) {
            ZeroOrderHold.Step step = transitions.over(gap);
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

    private double offset(int j) {
        return ctx.q > ctx.n ? solution[ctx.n + j] : 0.0;
    }

    private double[] keptTimes() {
        double[] out = new double[kept.count()];
        for (int i = 0; i < out.length; i++) {
            out[i] = ctx.trace.time(kept.sample(i));
        }
        return out;
    }

    /** One chunk's accumulators, the reference-time state if the chunk holds it, and the state at its last sample. */
    private record Chunk(ChannelAccumulator[] channels, double[] referenceState, double[] endState) {
    }

    /** Which samples are kept, their times, outputs (measured, fitted, residual; kept×p) and states (kept×n). */
    record Kept(KeptSamples samples, double[] times, double[] measured, double[] fitted, double[] residuals,
                double[] states) {
    }

    /** @param whitenedSquares Σ (r/σ)² over every present output: the residual sum of squares at x̂0 */
    record Result(List<ChannelDiagnostics> channels, Kept series, double[] referenceState, double[] endState,
                  double whitenedSquares) {
    }
}
