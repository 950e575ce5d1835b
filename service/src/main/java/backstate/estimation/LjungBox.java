package backstate.estimation;

import org.apache.commons.math3.special.Gamma;

/**
 * Streaming Ljung–Box portmanteau statistic Q = N(N+2) Σ_{k=1}^{h} ρ̂_k² / (N − k) of a residual
 * sequence (Ljung &amp; Box 1978, Biometrika 65(2):297–303), with ρ̂_k the lag-k autocorrelation about
 * the sample mean. One pass, O(h + batch) memory: lagged products plus the first and last h values,
 * which give the partial sums needed to centre each lag exactly.
 *
 * <p>The same first and last h values let two consecutive stretches of one series be joined
 * ({@link #append}): the lag-k products that straddle the join pair the later stretch's first k
 * values with the earlier one's last k, and every other term is a plain sum. So a series split into
 * chunks and accumulated in parallel gives the statistic of the whole, up to summation order.
 */
final class LjungBox {
    /** At most 10 lags, and no more than N/5: a common rule for non-seasonal series (from memory; Hyndman &amp; Athanasopoulos, Forecasting: Principles and Practice). */
    static final int MAX_LAGS = 10;
    static final int SAMPLES_PER_LAG = 5;
    /** Values gathered before their lagged products are summed, a batch at a time. */
    static final int BATCH = 256;

    private final int lags;
    /**
     * window[0 … h−1]: the h values before the current batch, newest last (zeros before the series
     * starts, whose products add nothing); window[h …]: the batch. Products are summed per batch,
     * lag by lag over contiguous values ({@link Matrices#dot}), rather than h scattered updates per value.
     */
    private final double[] window;
    private int batched;
    private final double[] first;
    private final double[] lagProducts;
    private long count;
    private double sum;
    private double sumSquares;

    /** @param expectedCount number of values that will be added (fixes the number of lags) */
    LjungBox(long expectedCount) {
        this.lags = lagsFor(expectedCount);
        this.window = new double[lags + BATCH];
        this.first = new double[Math.max(lags, 1)];
        this.lagProducts = new double[lags + 1];
    }

    /** Lags used for a series of this length: min(10, floor(N/5)). */
    static int lagsFor(long count) {
        return (int) Math.min(MAX_LAGS, count / SAMPLES_PER_LAG);
    }

    void add(double r) {
        if (count < lags) {
            first[(int) count] = r;
        }
        count++;
        sum += r;
        sumSquares += r * r;
        if (lags > 0) {
            window[lags + batched++] = r;
            if (batched == BATCH) {
                flush();
            }
        }
    }

    /** As {@link #add} for values[from … from+n−1] in order, with the running sums in locals. */
    void addAll(double[] values, int from, int n) {
        for (int i = 0; count + i < lags && i < n; i++) {
            first[(int) count + i] = values[from + i];
        }
        double s = sum;
        double squares = sumSquares;
        for (int i = from; i < from + n; i++) {
            double r = values[i];
            s += r;
            squares += r * r;
        }
        sum = s;
        sumSquares = squares;
        count += n;
        if (lags == 0) {
            return;
        }
        int done = 0;
        while (done < n) {
            int take = Math.min(n - done, BATCH - batched);
            System.arraycopy(values, from + done, window, lags + batched, take);
            batched += take;
            done += take;
            if (batched == BATCH) {
                flush();
            }
        }
    }

    /** Adds the batch's lagged products and keeps its last h values as the next batch's history. */
    private void flush() {
        if (batched == 0) {
            return;
        }
        if (lags == MAX_LAGS) {
            addTenLags();
        } else {
            for (int k = 1; k <= lags; k++) {
                lagProducts[k] += Matrices.dot(window, lags, window, lags - k, batched);
            }
        }
        System.arraycopy(window, batched, window, 0, lags);
        batched = 0;
    }

    /**
     * The batch's products r_i·r_{i−k}, k = 1 … 10, in two sweeps of five lags ({@link #addFiveLags}).
     * Five lags a sweep keep the window and the sums within the CPU's registers; ten in one sweep
     * spilled them. The lag-by-lag loop before both loaded two values a product.
     */
    private void addTenLags() {
        addFiveLags(1);
        addFiveLags(6);
    }

    /**
     * Products r_i·r_{i−k} for k = nearest … nearest+4 over the batch: the five partners ride in
     * locals shifted one place a value (a sliding window in registers, common practice, no source),
     * so each value is loaded once or twice for its five products, and the lags are five independent
     * sums, each the plain sum of its batch in trace order.
     */
    private void addFiveLags(int nearest) {
        int stop = MAX_LAGS + batched;
        double e1 = window[MAX_LAGS - nearest];
        double e2 = window[MAX_LAGS - nearest - 1];
        double e3 = window[MAX_LAGS - nearest - 2];
        double e4 = window[MAX_LAGS - nearest - 3];
        double e5 = window[MAX_LAGS - nearest - 4];
        double p1 = 0.0;
        double p2 = 0.0;
        double p3 = 0.0;
        double p4 = 0.0;
        double p5 = 0.0;
        for (int i = MAX_LAGS; i < stop; i++) {
            double r = window[i];
            p1 += r * e1;
            p2 += r * e2;
            p3 += r * e3;
            p4 += r * e4;
            p5 += r * e5;
            e5 = e4;
            e4 = e3;
            e3 = e2;
            e2 = e1;
            e1 = window[i + 1 - nearest];
        }
        lagProducts[nearest] += p1;
        lagProducts[nearest + 1] += p2;
        lagProducts[nearest + 2] += p3;
        lagProducts[nearest + 3] += p4;
        lagProducts[nearest + 4] += p5;
    }

    int lags() {
        return lags;
    }

    /**
     * Joins the series that {@code later} accumulated onto the end of this one, as if its values had
     * been added here one by one: lagged products gain the cross terms r_i·r_{i−k} with r_i among the
     * later stretch's first k values and r_{i−k} among this one's last k (fewer where a stretch is
     * shorter than k); the first and last h values are those of the joined series.
     *
     * @throws IllegalArgumentException when the two were set up for different numbers of lags
     */
    void append(LjungBox later) {
        if (later.lags != lags) {
            throw new IllegalArgumentException("later: got " + later.lags + " lags, expected " + lags
                    + " (both stretches must be set up with the whole series' expected count)");
        }
        flush();
        later.flush();
        long total = count + later.count;
        if (lags > 0) {
            for (int k = 1; k <= lags; k++) {
                double cross = 0.0;
                for (int i = (int) Math.max(0, k - count); i < k && i < later.count; i++) {
                    cross += later.first[i] * valueBack(k - i);
                }
                lagProducts[k] = lagProducts[k] + cross + later.lagProducts[k];
            }
            for (int i = 0; count + i < lags && i < later.count; i++) {
                first[(int) count + i] = later.first[i];
            }
            double[] newest = new double[lags];
            for (int j = 1; j <= Math.min(lags, total); j++) {
                newest[j - 1] = j <= later.count ? later.valueBack(j) : valueBack(j - (int) later.count);
            }
            for (int j = 1; j <= lags; j++) {
                window[lags - j] = newest[j - 1];
            }
        }
        count = total;
        sum += later.sum;
        sumSquares += later.sumSquares;
    }

    /** The value j places back from the newest (j = 1 is the newest), 1 ≤ j ≤ min(count, lags). */
    private double valueBack(int j) {
        return window[lags + batched - j];
    }

    /** Q, or NaN when there are no lags or the series is constant. */
    double statistic() {
        if (lags == 0) {
            return Double.NaN;
        }
        flush();
        double mean = sum / count;
        double denominator = sumSquares - count * mean * mean;
        if (!(denominator > 0.0)) {
            return Double.NaN;
        }
        double q = 0.0;
        double headSum = 0.0;
        double tailSum = 0.0;
        for (int k = 1; k <= lags; k++) {
            headSum += first[k - 1];
            tailSum += valueBack(k);
            double leading = sum - headSum;
            double lagged = sum - tailSum;
            double centred = lagProducts[k] - mean * (leading + lagged) + (count - k) * mean * mean;
            double rho = centred / denominator;
            q += rho * rho / (count - k);
        }
        return count * (count + 2.0) * q;
    }

    /** Upper-tail χ²(h) probability of Q via the regularised incomplete gamma function (Abramowitz &amp; Stegun 26.4.19). */
    double pValue() {
        double q = statistic();
        return Double.isNaN(q) ? Double.NaN : chiSquareUpperTail(q, lags);
    }

    /** P(χ²_dof &gt; x) = Q(dof/2, x/2), the regularised upper incomplete gamma (Abramowitz &amp; Stegun 26.4.19). */
    static double chiSquareUpperTail(double x, double dof) {
        if (dof <= 0) {
            return Double.NaN;
        }
        return x <= 0.0 ? 1.0 : Gamma.regularizedGammaQ(dof / 2.0, x / 2.0);
    }
}
