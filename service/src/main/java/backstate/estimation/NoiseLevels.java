package backstate.estimation;

import backstate.estimation.ChannelDiagnostics.SigmaSource;
import java.util.function.IntToDoubleFunction;

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

    /**
     * Refuses a prior, and the process-noise formulation, unless every output's σ is given (by the
     * trace or the model): both state a covariance in the states' own units, which the data are
     * weighed against by σ. With σ estimated from the residuals instead (σ = 1, then σ̂²), the stated
     * covariance would be scaled by σ̂² too, and the intervals under-cover (Monte-Carlo in
     * test-data/reference/prior_without_sigma_coverage.py: 67 % of x0's 95 % intervals held the truth).
     *
     * @param traceSigma the trace's σ of output j, NaN where the trace gives none
     */
    static void requireGivenWithStatedCovariance(StateSpaceModel model, IntToDoubleFunction traceSigma,
                                                 EstimationOptions options) {
        boolean prior = options.prior() != null;
        if (!prior && options.formulation() != Formulation.PROCESS_NOISE) {
            return;
        }
        for (int j = 0; j < model.outputs(); j++) {
            if (Double.isNaN(traceSigma.applyAsDouble(j)) && model.defaultNoiseSigma() == null) {
                throw new ModelException("noiseSigma[" + j + "]", "got no σ for this output (neither the trace nor the"
                        + " model version gives one), expected every output's σ " + (prior
                        ? "with a prior: its covariance is in the states' units" : "with the process_noise formulation:"
                        + " its process noise is in the states' units") + ", and the data are weighed against it by σ,"
                        + " which estimating σ from the residuals would scale it with");
            }
        }
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
