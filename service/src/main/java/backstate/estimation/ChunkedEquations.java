package backstate.estimation;

import java.util.concurrent.CompletableFuture;
import java.util.concurrent.CompletionException;

/**
 * Runs the equation pass of a long trace as two chunks on two cores and joins them exactly.
 *
 * <p>The second chunk (samples m … N−1) is accumulated with its own start state s = x(t_m) as the
 * unknown and its forced response starting from zero, giving R₂ [s; offsets] ≈ z₂. Since
 * s = Φ(t_m − t0) x0 + f_m, with f_m the first chunk's forced response carried to t_m, the chunk's
 * information becomes R₂·diag(Φ, I)·θ ≈ z₂ − R₂[:, states]·f_m and is folded into the first chunk's
 * factor like any reduced block (sequential accumulation, Lawson &amp; Hanson 1974, ch. 27; the same
 * change of unknowns as a square-root information filter's time update without process noise,
 * Bierman 1977, ch. VI). Same equations, same least-squares problem. Φ(t_m − t0) and f_m are
 * handed on with the result: the residual pass starts its second chunk at Φ·x̂0 + f_m.
 */
final class ChunkedEquations {
    /** Below this many samples one core finishes before a second one pays off. */
    static final int PARALLEL_FROM_SAMPLES = 100_000;

    private ChunkedEquations() {
    }

    /** Whether work over this many samples goes as two halves on two cores (a long trace, and a second core). */
    static boolean inTwoHalves(int samples) {
        return samples >= PARALLEL_FROM_SAMPLES && Runtime.getRuntime().availableProcessors() >= 2;
    }

    static EquationPass.Result run(SolveContext ctx) {
        int samples = ctx.trace.samples();
        if (!inTwoHalves(samples)) {
            return EquationPass.run(ctx);
        }
        int middle = samples / 2;
        // The copy is made on the worker, so its scratch arrays sit in the worker's allocation buffer:
        // made here, they sat next to this thread's, and both threads writing one cache line doubled the pass's time.
        CompletableFuture<EquationPass.Result> tail = CompletableFuture.supplyAsync(
                () -> EquationPass.run(ctx.copy(), middle, samples));
        EquationPass.Result head = EquationPass.run(ctx, 0, middle);
        return join(ctx, head, await(tail), middle);
    }

    private static EquationPass.Result join(SolveContext ctx, EquationPass.Result head, EquationPass.Result tail,
                                            int middle) {
        int n = ctx.n;
        double[] forced = head.forcedAtLast();
        long unitsAtMiddle = ctx.units(middle);
        ctx.propagate(forced, middle, ctx.transitions.over(unitsAtMiddle - ctx.units(middle - 1)), ctx.stepScratch());
        double[] phi = ctx.transitions.fresh(unitsAtMiddle).transition();
        head.factors().appendChunk(tail.factors(), phi, forced, n);
        long[] counts = head.presentCounts().clone();
        for (int j = 0; j < counts.length; j++) {
            counts[j] += tail.presentCounts()[j];
        }
        return new EquationPass.Result(head.factors(), counts, null, new EquationPass.ChunkStart(middle, phi, forced));
    }

    /** The future's value; a runtime exception thrown inside it is rethrown as itself, not wrapped. */
    static <T> T await(CompletableFuture<T> future) {
        try {
            return future.join();
        } catch (CompletionException e) {
            if (e.getCause() instanceof RuntimeException cause) {
                throw cause;
            }
            throw e;
        }
    }
}
