package backstate.formats;

import backstate.estimation.Trace;

/**
 * A trace as read from a body, column by column, with its solve options: the times as epoch
 * seconds on the microsecond grid, each output of the model in its order (null when the body had
 * none: all missing), each input, and the noise σ given (null for none). The intake encodes it for
 * storage straight from these columns ({@link TraceCodec#encode(ParsedColumns)}), so a large upload
 * is never held as the engine's row-major {@link Trace} too; {@link #assemble()} builds that Trace
 * once, letting go of each column as it is copied.
 */
public final class ParsedColumns {
    private final double[] times;
    /** The times were written as numbers of seconds (not RFC 3339 times). */
    private final boolean timesAsNumbers;
    private final DoubleColumn[] outputs;
    private final DoubleColumn[] inputs;
    private final double[] noiseSigmaOrNull;
    private final TraceOptions options;

    ParsedColumns(double[] times, boolean timesAsNumbers, DoubleColumn[] outputs, DoubleColumn[] inputs,
                  double[] noiseSigmaOrNull, TraceOptions options) {
        this.times = times;
        this.timesAsNumbers = timesAsNumbers;
        this.outputs = outputs;
        this.inputs = inputs;
        this.noiseSigmaOrNull = noiseSigmaOrNull;
        this.options = options;
    }

    /** True when the trace wrote its times as numbers of seconds, false for RFC 3339 times. */
    public boolean timesAsNumbers() {
        return timesAsNumbers;
    }

    public int samples() {
        return times.length;
    }

    public int outputCount() {
        return outputs.length;
    }

    public int inputCount() {
        return inputs.length;
    }

    /** The sample times (strictly increasing, at least 1 µs apart); callers must not write. */
    public double[] timesView() {
        return times;
    }

    public TraceOptions options() {
        return options;
    }

    /** The same columns with other options. */
    ParsedColumns withOptions(TraceOptions other) {
        return new ParsedColumns(times, timesAsNumbers, outputs, inputs, noiseSigmaOrNull, other);
    }

    /** Output j's column, or null when the body gave none (every value missing). */
    DoubleColumn output(int j) {
        return outputs[j];
    }

    /** True when output j has at least one value in the window (a missing sample is NaN, or no column at all). */
    public boolean hasValues(int j) {
        return values(j, 1) > 0;
    }

    /** How many values output j has in the window, counted up to {@code atMost}. */
    public int values(int j, int atMost) {
        DoubleColumn column = outputs[j];
        int count = 0;
        for (int k = 0; column != null && k < column.size() && count < atMost; k++) {
            if (!Double.isNaN(column.get(k))) {
                count++;
            }
        }
        return count;
    }

    DoubleColumn input(int i) {
        return inputs[i];
    }

    /** The trace's own σ of output j, NaN where it gives none. */
    public double noiseSigma(int j) {
        return noiseSigmaOrNull == null ? Double.NaN : noiseSigmaOrNull[j];
    }

    /**
     * The engine's row-major trace; the columns are emptied as they are copied, so call it once,
     * and not after {@link TraceCodec#encode(ParsedColumns)}.
     */
    public ParsedTrace assemble() {
        int n = times.length;
        for (DoubleColumn column : inputs) {
            if (column.size() != n) {
                throw new IllegalStateException("got columns already handed over, expected them as read (assemble once, before any encode)");
            }
        }
        int p = outputs.length;
        int m = inputs.length;
        double[] y = new double[n * p];
        DoubleColumn.interleave(outputs, n, y);
        double[] u = new double[n * m];
        DoubleColumn.interleave(inputs, n, u);
        return new ParsedTrace(new Trace(times, y, u, p, m, noiseSigmaOrNull), options);
    }
}
