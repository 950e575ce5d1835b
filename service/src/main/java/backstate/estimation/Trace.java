package backstate.estimation;

import backstate.text.Counted;

/**
 * One unit's sampled output trace over a window: sample times, outputs with missing values,
 * and known inputs held constant from each sample to the next (zero-order hold).
 *
 * <p>Layout: outputs are row-major N×p ({@code outputs[k * p + j]}) with {@code NaN} for a
 * missing value; inputs are row-major N×m and must be finite. One flat array per quantity keeps
 * a million-sample trace in three allocations instead of a million small ones.
 */
public final class Trace {
    private final double[] times;
    private final double[] outputs;
    private final double[] inputs;
    private final int outputCount;
    private final int inputCount;
    private final double[] noiseSigma;

    /**
     * @param times       sample times in seconds, finite and strictly increasing
     * @param outputs     N×p row-major, NaN marks a missing value
     * @param inputs      N×m row-major, or null when m = 0
     * @param outputCount p
     * @param inputCount  m
     * @param noiseSigma  per-channel noise standard deviation, or null; a NaN entry means "not given"
     */
    public Trace(double[] times, double[] outputs, double[] inputs, int outputCount, int inputCount,
                 double[] noiseSigma) {
        this.times = times;
        this.outputs = outputs;
        this.inputs = inputs == null ? new double[0] : inputs;
        this.outputCount = outputCount;
        this.inputCount = inputCount;
        this.noiseSigma = noiseSigma;
        validate();
    }

    public int samples() {
        return times.length;
    }

    public int outputCount() {
        return outputCount;
    }

    public int inputCount() {
        return inputCount;
    }

    public double time(int k) {
        return times[k];
    }

    public double output(int k, int channel) {
        return outputs[k * outputCount + channel];
    }

    public double input(int k, int channel) {
        return inputs[k * inputCount + channel];
    }

    /** The given noise σ for a channel, or NaN when the trace gives none for it. */
    public double noiseSigma(int channel) {
        return noiseSigma == null ? Double.NaN : noiseSigma[channel];
    }

    /** Shared view of the raw arrays for the estimator's inner loops; callers must not write. */
    double[] timesView() {
        return times;
    }

    double[] outputsView() {
        return outputs;
    }

    double[] inputsView() {
        return inputs;
    }

    /** At least one sample, or {@link ModelException} naming the time column. */
    static void requireSamples(int n) {
        if (n == 0) {
            throw new ModelException("time", "got no samples, expected at least one");
        }
    }

    private void validate() {
        requireSamples(times == null ? 0 : times.length);
        int n = times.length;
        requireLength("outputs", outputs, (long) n * outputCount);
        requireLength("inputs", inputs, (long) n * inputCount);
        for (int k = 0; k < n; k++) {
            if (!Double.isFinite(times[k])) {
                throw new ModelException("time[" + k + "]", "got " + times[k] + ", expected a finite number");
            }
            if (k > 0 && !(times[k] > times[k - 1])) {
                throw new ModelException("time[" + k + "]", "got " + times[k] + " after " + times[k - 1]
                        + ", expected strictly increasing times");
            }
        }
        for (int i = 0; i < outputs.length; i++) {
            if (Double.isInfinite(outputs[i])) {
                throw new ModelException("outputs[" + i / outputCount + "][" + i % outputCount + "]",
                        "got " + outputs[i] + ", expected a finite number or missing");
            }
        }
        for (int i = 0; i < inputs.length; i++) {
            if (!Double.isFinite(inputs[i])) {
                throw new ModelException("inputs[" + i / inputCount + "][" + i % inputCount + "]",
                        "got " + inputs[i] + ", expected a finite number");
            }
        }
        validateSigma();
    }

    private void validateSigma() {
        if (noiseSigma == null) {
            return;
        }
        requireLength("noiseSigma", noiseSigma, outputCount);
        for (int j = 0; j < outputCount; j++) {
            double s = noiseSigma[j];
            if (!Double.isNaN(s) && (!(s > 0.0) || Double.isInfinite(s))) {
                throw new ModelException("noiseSigma[" + j + "]", "got " + s + ", expected a finite number > 0");
            }
        }
    }

    private static void requireLength(String field, double[] values, long expected) {
        if (values.length != expected) {
            throw new ModelException(field, "got " + Counted.of(values.length, "value") + ", expected " + expected);
        }
    }
}
