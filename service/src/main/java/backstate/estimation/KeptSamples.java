package backstate.estimation;

/**
 * The samples a thinned series keeps: 0, s, 2s, … and the last, so a plot of a long trace spans the
 * whole window and ends at its last sample (the latest state the trace shows) whatever the stride.
 */
public final class KeptSamples {
    private final int samples;
    private final int stride;
    private final int count;

    /**
     * @param samples N ≥ 1
     * @param stride  s ≥ 1
     */
    KeptSamples(int samples, int stride) {
        this.samples = samples;
        this.stride = stride;
        int last = samples - 1;
        this.count = last / stride + 1 + (last % stride == 0 ? 0 : 1);
    }

    /**
     * The smallest stride whose kept samples number at most {@code maxPoints} (≥ 2) of N:
     * s = ⌈(N − 1) / (maxPoints − 1)⌉, at least 1.
     */
    public static int strideFor(int samples, int maxPoints) {
        if (maxPoints < 2) {
            throw new IllegalArgumentException("maxPoints: got " + maxPoints + ", expected 2 or more"
                    + " (a series keeps the first and the last sample)");
        }
        return Math.max(1, (samples - 1 + maxPoints - 2) / (maxPoints - 1));
    }

    int count() {
        return count;
    }

    /** The sample index of kept point i. */
    int sample(int i) {
        return i == count - 1 ? samples - 1 : i * stride;
    }

    /** The kept point that sample k is, or −1 when k is not kept. */
    int slotOf(int k) {
        if (k % stride == 0) {
            return k / stride;
        }
        return k == samples - 1 ? count - 1 : -1;
    }

    /** True when one of samples k … k+length−1 is kept. */
    boolean anyIn(int k, int length) {
        int end = k + length - 1;
        return k % stride == 0 || k / stride != end / stride || end >= samples - 1;
    }
}
