package backstate.estimation;

import backstate.estimation.ChannelDiagnostics.SigmaSource;

/** Per-channel noise σ: the trace's if given, else the model's default, else 1 (and σ̂ is reported). */
final class NoiseLevels {
    private final double[] sigma;
    private final SigmaSource[] source;

    NoiseLevels(StateSpaceModel model, Trace trace) {
        int p = model.outputs();
        double[] modelSigma = model.defaultNoiseSigma();
        sigma = new double[p];
        source = new SigmaSource[p];
        for (int j = 0; j < p; j++) {
            double given = trace.noiseSigma(j);
            if (!Double.isNaN(given)) {
                sigma[j] = given;
                source[j] = SigmaSource.TRACE;
            } else if (modelSigma != null) {
                sigma[j] = modelSigma[j];
                source[j] = SigmaSource.MODEL;
            } else {
                sigma[j] = 1.0;
                source[j] = SigmaSource.ASSUMED_ONE;
            }
        }
    }

    double sigma(int channel) {
        return sigma[channel];
    }

    SigmaSource source(int channel) {
        return source[channel];
    }

    /** True when every channel's σ was given, so χ² can be tested against its distribution. */
    boolean allGiven() {
        for (SigmaSource s : source) {
            if (s == SigmaSource.ASSUMED_ONE) {
                return false;
            }
        }
        return true;
    }
}
