package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assumptions.assumeTrue;

import java.lang.management.ManagementFactory;
import org.junit.jupiter.api.Test;

/**
 * The window-end solve allocates no more at 4N samples than at N: its working memory does not grow
 * with N (total allocation bounds what can be held). Measured by the JVM's per-thread allocation
 * counter (com.sun.management.ThreadMXBean), after warm-ups through the same measuring code so class
 * loading (the solve's and the assertions') is out of the figure. Common practice, no source.
 */
class ProcessNoiseWindowEndMemoryTest {
    static final int SAMPLES = 5_000;
    /** Warm-up rounds: the first round loads classes (1.6 MB here); from the second the figure is steady. */
    static final int WARM_UPS = 3;
    /**
     * Allowed difference between the two runs: after warm-up they differ by 0–150 bytes here (34 kB
     * each, the same at N and 4N; compiled code may elide an allocation the interpreter made). Any allocation per sample, even 16 bytes,
     * adds 16 · 3 · SAMPLES = 240 000 bytes, far above this.
     */
    static final long SLACK_BYTES = 64 * 1024;

    @Test
    void window_end_solve_allocates_the_same_at_n_and_at_four_n() {
        com.sun.management.ThreadMXBean bean = (com.sun.management.ThreadMXBean) ManagementFactory.getThreadMXBean();
        assumeTrue(bean.isThreadAllocatedMemorySupported() && bean.isThreadAllocatedMemoryEnabled());
        StateSpaceModel model = StateSpaceModel.continuous(new double[][] {{0, 1}, {-4, -0.4}},
                new double[][] {{0}, {1}}, new double[][] {{1, 0}}, null, null)
                .withProcessNoise(new double[][] {{0.01, 0}, {0, 0.02}});
        EstimationOptions options = EstimationOptions.defaults().withFormulation(Formulation.PROCESS_NOISE)
                .withKeepSeries(false).withPrior(new Prior(new double[] {0, 0}, new double[] {4, 0, 0, 4}));
        Trace small = trace(SAMPLES);
        Trace large = trace(4 * SAMPLES);
        for (int warm = 0; warm < WARM_UPS; warm++) {
            allocatedBy(bean, model, small, options);
            allocatedBy(bean, model, large, options);
        }
        long atN = allocatedBy(bean, model, small, options);
        long atFourN = allocatedBy(bean, model, large, options);
        assertTrue(Math.abs(atFourN - atN) <= SLACK_BYTES, "allocated " + atN + " bytes at N, " + atFourN + " at 4N");
    }

    private static long allocatedBy(com.sun.management.ThreadMXBean bean, StateSpaceModel model, Trace trace,
                                     EstimationOptions options) {
        long thread = Thread.currentThread().getId();
        long before = bean.getThreadAllocatedBytes(thread);
        Estimate e = assertInstanceOf(Estimate.class, InitialStateEstimator.solve(model, trace, options));
        long after = bean.getThreadAllocatedBytes(thread);
        assertNotNull(e.windowEnd());
        assertNull(e.series());
        return after - before;
    }

    /** A sampled oscillator response with a held input, one sample in seven missing. */
    private static Trace trace(int samples) {
        double[] times = new double[samples];
        double[] outputs = new double[samples];
        double[] inputs = new double[samples];
        for (int k = 0; k < samples; k++) {
            times[k] = 0.1 * k;
            outputs[k] = k % 7 == 3 ? Double.NaN : Math.sin(0.3 * k);
            inputs[k] = Math.cos(0.1 * k);
        }
        return new Trace(times, outputs, inputs, 1, 1, new double[] {0.1});
    }
}
