package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/** A residual pass split into chunks gives the diagnostics, series and reference state of one chunk. */
class ResidualPassChunkTest {
    /**
     * Relative agreement of chunked and one-chunk results. They differ by rounding only: a chunk's
     * start state comes from the blocked sweep, which agrees with the step-by-step states to that
     * route's own rounding (≈ 2e-14·|x| here), so ŷ and r move by δr ≲ 1e-13, under 1e-12 of the
     * series' scale max|ŷ|. Sums of r² move by ≈ δr/(σ√N) relative (δr is smooth, r is noise),
     * the largest |r| by δr/max|r| ≈ 2e-13, and joined sums differ from running ones by
     * reordering, ≲ N·ε ≈ 7e-13 for N = 6000.
     */
    private static final double RELATIVE = 1e-12;
    /**
     * Ljung–Box Q against one chunk. Q sums squared autocorrelations of size ~1/√N, so a residual
     * perturbation moves it by ≈ max|δr|/σ relative rather than δr/r: observed 2.3e-12 for
     * max|δr| = 6e-14 at σ = 0.02 (3 chunks, continuous). That is the one-chunk pass's own
     * rounding showing, not the join: {@link #RELATIVE} holds between each pass's Q and the
     * two-pass Q of its own residual series (checked below). 1e-10 leaves a 40× margin.
     */
    private static final double WHITENESS_RELATIVE = 1e-10;
    /** p = Q(h/2, Q/2) moves by ≈ (Q/2)·δQ/Q relative for a relative change δQ/Q (Q ≲ 30 here). */
    private static final double WHITENESS_P_RELATIVE = 1e-8;

    static Stream<Arguments> cases() {
        List<Arguments> out = new ArrayList<>();
        for (String kind : new String[] {"continuous", "discrete"}) {
            for (int chunks : new int[] {2, 3}) {
                // Reference: in a gap inside chunk 0; exactly the first sample of the second chunk
                // (C = 2); between the last sample of a chunk and the next one's first (C = 3).
                out.add(Arguments.of(kind, chunks, 1499, true));
                out.add(Arguments.of(kind, chunks, 3000, false));
                out.add(Arguments.of(kind, chunks, 3999, true));
            }
        }
        return out.stream();
    }

    @ParameterizedTest(name = "{0} model, {1} chunks, reference at sample {2} (between samples: {3})")
    @MethodSource("cases")
    void chunked_pass_matches_one_chunk(String kind, int chunks, int referenceSample, boolean between) {
        StateSpaceModel model = "discrete".equals(kind) ? ChunkTraces.discrete() : ChunkTraces.continuous();
        Trace trace = ChunkTraces.trace(model, 11L);
        EstimationOptions options = EstimationOptions.defaults().withOffsets(true)
                .withReferenceTime(referenceTime(model, trace, referenceSample, between));
        SolveContext ctx = new SolveContext(model, trace, options);
        double[] solution = ChunkTraces.truth(model);
        long[] counts = ChunkTraces.presentCounts(trace);

        ResidualPass.Result one = ResidualPass.run(ctx, solution, counts, 1);
        ResidualPass.Result many = ResidualPass.run(ctx, solution, counts, chunks);

        assertSame(one, many, kind + ", " + chunks + " chunks");
        ChannelDiagnostics first = one.channels().get(0);
        assertTrue(first.outliers() >= 1, "the trace's spikes reach the outlier count: " + first);
        assertTrue(one.channels().get(1).samples() < first.samples() - 2000, "channel 1 misses a middle chunk");
    }

    @Test
    void a_trace_at_the_threshold_is_split_and_matches_one_chunk() {
        assertEquals(1, ResidualPass.chunksFor(ResidualPass.PARALLEL_MIN_SAMPLES - 1));
        assertEquals(ResidualPass.PARALLEL_CHUNKS, ResidualPass.chunksFor(ResidualPass.PARALLEL_MIN_SAMPLES));
        int samples = ResidualPass.PARALLEL_MIN_SAMPLES;
        StateSpaceModel model = StateSpaceModel.continuous(new double[][] {{-0.2, 3.0}, {-3.0, -0.2}},
                new double[][] {{0.0}, {1.0}}, new double[][] {{1.0, 0.5}}, null, new double[] {0.01});
        double[] times = new double[samples];
        double[] outputs = new double[samples];
        double[] inputs = new double[samples];
        java.util.Random random = new java.util.Random(5L);
        for (int k = 0; k < samples; k++) {
            times[k] = k * 1e-3;
            inputs[k] = (k / 500) % 2 == 0 ? 1.0 : -1.0;
            outputs[k] = random.nextDouble() < 0.01 ? Double.NaN : 0.01 * random.nextGaussian();
        }
        Trace trace = new Trace(times, outputs, inputs, 1, 1, null);
        SolveContext ctx = new SolveContext(model, trace,
                EstimationOptions.defaults().withReferenceTime(times[samples - 7] + 4e-4));
        double[] solution = {0.7, -0.2};
        long[] counts = ChunkTraces.presentCounts(trace);

        assertSame(ResidualPass.run(ctx, solution, counts, 1), ResidualPass.run(ctx, solution, counts), "default split");
    }

    private static double referenceTime(StateSpaceModel model, Trace trace, int k, boolean between) {
        double t = trace.time(k);
        if (!between) {
            return t;
        }
        double later = model.isDiscrete() ? t + model.samplePeriod() : 0.5 * (t + trace.time(k + 1));
        assertTrue(later < trace.time(k + 1), "sample " + k + " has room for a reference time after it");
        return later;
    }

    private static void assertSame(ResidualPass.Result one, ResidualPass.Result many, String what) {
        assertEquals(one.channels().size(), many.channels().size(), what);
        for (int j = 0; j < one.channels().size(); j++) {
            ChannelDiagnostics e = one.channels().get(j);
            ChannelDiagnostics a = many.channels().get(j);
            String where = what + ", channel " + j;
            assertEquals(e.samples(), a.samples(), where + ": samples");
            assertEquals(e.sigma(), a.sigma(), where + ": sigma");
            assertEquals(e.sigmaSource(), a.sigmaSource(), where + ": sigmaSource");
            assertEquals(e.ljungBoxLags(), a.ljungBoxLags(), where + ": ljungBoxLags");
            assertEquals(e.outliers(), a.outliers(), where + ": outliers");
            assertClose(e.rms(), a.rms(), RELATIVE, where + ": rms");
            assertClose(e.maxAbs(), a.maxAbs(), RELATIVE, where + ": maxAbs");
            assertClose(e.rSquared(), a.rSquared(), RELATIVE, where + ": rSquared");
            assertClose(e.ljungBoxQ(), a.ljungBoxQ(), WHITENESS_RELATIVE, where + ": ljungBoxQ");
            assertClose(e.ljungBoxP(), a.ljungBoxP(), WHITENESS_P_RELATIVE, where + ": ljungBoxP");
            assertClose(directLjungBox(many.series(), j), a.ljungBoxQ(), RELATIVE, where + ": joined Q vs two-pass Q");
        }
        assertNotNull(one.referenceState(), what + ": reference state");
        EstimateCases.assertCloseNormwise(one.referenceState(), many.referenceState(), RELATIVE, what + ": reference state");
        EstimateCases.assertCloseNormwise(one.endState(), many.endState(), RELATIVE, what + ": state at the last sample");
        ResidualPass.Kept s1 = one.series();
        ResidualPass.Kept s2 = many.series();
        assertArrayEquals(s1.times(), s2.times(), what + ": times");
        EstimateCases.assertCloseNormwise(s1.states(), s2.states(), RELATIVE, what + ": state trajectory");
        int p = s1.fitted().length / s1.times().length;
        for (int j = 0; j < p; j++) {
            double scale = 0.0;
            for (int k = j; k < s1.fitted().length; k += p) {
                scale = Math.max(scale, Math.abs(s1.fitted()[k]));
            }
            for (int k = j; k < s1.fitted().length; k += p) {
                assertEquals(s1.fitted()[k], s2.fitted()[k], RELATIVE * scale, what + ": fitted[" + k / p + "][" + j + "]");
                assertEquals(s1.residuals()[k], s2.residuals()[k], RELATIVE * scale,
                        what + ": residuals[" + k / p + "][" + j + "]");
            }
        }
    }

    /** Q of channel j's present residuals (y missing gives a NaN residual), by the textbook two-pass formula. */
    private static double directLjungBox(ResidualPass.Kept series, int j) {
        int p = series.residuals().length / series.times().length;
        double[] present = new double[series.residuals().length / p];
        int count = 0;
        for (int k = j; k < series.residuals().length; k += p) {
            if (!Double.isNaN(series.residuals()[k])) {
                present[count++] = series.residuals()[k];
            }
        }
        double[] r = java.util.Arrays.copyOf(present, count);
        return LjungBoxAppendTest.direct(r, LjungBox.lagsFor(count));
    }

    /** NaN must stay NaN; otherwise |actual − expected| ≤ relative·|expected|. */
    private static void assertClose(double expected, double actual, double relative, String what) {
        if (Double.isNaN(expected)) {
            assertTrue(Double.isNaN(actual), what + ": got " + actual + ", expected NaN");
            return;
        }
        assertEquals(expected, actual, relative * Math.abs(expected), what);
    }
}
