package backstate.estimation;

import java.util.Arrays;

/**
 * Sample quantiles of a finite data set by linear interpolation between order statistics:
 * Q(p) = x₍ⱼ₎ + g·(x₍ⱼ₊₁₎ − x₍ⱼ₎) with h = (n − 1)·p, j = ⌊h⌋, g = h − j over the sorted data
 * x₍₀₎ ≤ … ≤ x₍ₙ₋₁₎ (Hyndman &amp; Fan 1996, "Sample quantiles in statistical packages", The
 * American Statistician 50(4):361–365, definition 7; the default of numpy.percentile and R).
 *
 * <p>Layout: the values are a prefix of a primitive array that is sorted in place (Arrays.sort,
 * the dual-pivot quicksort of Yaroslavskiy 2009 with a heap-sort fallback, O(n log n) worst case),
 * so a column of a million values costs one 8 MB array and no boxing.
 */
public final class SampleQuantiles {
    private SampleQuantiles() {
    }

    /**
     * Sorts {@code values[0..count)} in place and returns Q(p) for each probability.
     *
     * @throws IllegalArgumentException if count is outside 1..values.length, a value is not finite, or a
     *                                  probability is outside [0, 1]
     */
    public static double[] sortAndCompute(double[] values, int count, double... probabilities) {
        if (count < 1 || count > values.length) {
            throw new IllegalArgumentException("got count " + count + ", expected 1.." + values.length);
        }
        for (double p : probabilities) {
            if (!(p >= 0.0 && p <= 1.0)) {
                throw new IllegalArgumentException("got probability " + p + ", expected 0 <= p <= 1");
            }
        }
        for (int i = 0; i < count; i++) {
            if (!Double.isFinite(values[i])) {
                throw new IllegalArgumentException("got values[" + i + "] = " + values[i] + ", expected a finite number");
            }
        }
        Arrays.sort(values, 0, count);
        double[] out = new double[probabilities.length];
        for (int i = 0; i < probabilities.length; i++) {
            out[i] = ofSorted(values, count, probabilities[i]);
        }
        return out;
    }

    /** Q(p) of {@code sorted[0..count)}, already ascending. */
    static double ofSorted(double[] sorted, int count, double p) {
        int j = lowerRank(count, p);
        if (j >= count - 1) {
            return sorted[count - 1];
        }
        return interpolate(sorted[j], sorted[j + 1], count, p);
    }

    /** j = ⌊(n − 1)·p⌋: Q(p) lies between the order statistics x₍ⱼ₎ and x₍ⱼ₊₁₎ (x₍ₙ₋₁₎ alone when j = n − 1). */
    public static int lowerRank(int count, double p) {
        return (int) Math.floor((count - 1) * p);
    }

    /**
     * Q(p) from the two order statistics x₍ⱼ₎ and x₍ⱼ₊₁₎, j = {@link #lowerRank}, for a reader that
     * fetches them without holding the sorted data; x₍ⱼ₎ when j = n − 1 (upper is then ignored).
     */
    public static double interpolate(double lower, double upper, int count, double p) {
        int j = lowerRank(count, p);
        if (j >= count - 1) {
            return lower;
        }
        double g = (count - 1) * p - j;
        return lower + g * (upper - lower);
    }
}
