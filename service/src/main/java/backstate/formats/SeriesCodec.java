package backstate.formats;

import backstate.estimation.Estimate;
import java.nio.ByteBuffer;

/**
 * Binary storage form of the fitted and residual series, thinned by a fixed stride to at most
 * {@link #MAX_STORED_POINTS} samples so a million-sample trace does not store a million-row series.
 */
public final class SeriesCodec {
    /** Plot-ready series size; a dashboard asks for at most a few thousand points. */
    public static final int MAX_STORED_POINTS = 20_000;

    private SeriesCodec() {
    }

    /** Series with times (K), fitted and residuals (K×p row-major, NaN residual where y was missing). */
    public record Decoded(double[] times, double[] fitted, double[] residuals, int outputs) {
        public int points() {
            return times.length;
        }
    }

    public static byte[] encode(Estimate.Series s) {
        int p = s.outputCount();
        int n = s.times().length;
        int stride = Math.max(1, (n + MAX_STORED_POINTS - 1) / MAX_STORED_POINTS);
        int kept = (n + stride - 1) / stride;
        ByteBuffer buf = ByteBuffer.allocate(8 + 8 * kept * (1 + 2 * p));
        buf.putInt(kept).putInt(p);
        for (int k = 0; k < n; k += stride) {
            buf.putDouble(s.times()[k]);
            for (int j = 0; j < p; j++) {
                buf.putDouble(s.fitted()[k * p + j]);
                buf.putDouble(s.residuals()[k * p + j]);
            }
        }
        return buf.array();
    }

    public static Decoded decode(byte[] bytes) {
        ByteBuffer buf = ByteBuffer.wrap(bytes);
        int n = buf.getInt();
        int p = buf.getInt();
        double[] times = new double[n];
        double[] fitted = new double[n * p];
        double[] residuals = new double[n * p];
        for (int k = 0; k < n; k++) {
            times[k] = buf.getDouble();
            for (int j = 0; j < p; j++) {
                fitted[k * p + j] = buf.getDouble();
                residuals[k * p + j] = buf.getDouble();
            }
        }
        return new Decoded(times, fitted, residuals, p);
    }
}
