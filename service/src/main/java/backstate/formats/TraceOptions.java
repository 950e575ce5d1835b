package backstate.formats;

import backstate.estimation.EstimationOptions;
import backstate.estimation.Formulation;
import backstate.estimation.Prior;
import backstate.text.Counted;
import com.fasterxml.jackson.annotation.JsonInclude;

/**
 * Per-trace solve options as users write them (a trace body's {@code options} or query parameters).
 *
 * @param formulation     "sampled" (default), "continuous", or "process_noise" (the model version must declare
 *                        its process noise)
 * @param estimateOffsets estimate a constant offset per output channel
 * @param referenceTime   also report the state at this time, inside the window: written as an RFC 3339 time or
 *                        as seconds on the trace's clock (since its declared start, or since 1970), held as
 *                        epoch seconds once the trace is read ({@link TraceReader})
 * @param prior           Gaussian prior on x0
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record TraceOptions(String formulation, Boolean estimateOffsets, Double referenceTime, PriorDocument prior) {
    public static final TraceOptions NONE = new TraceOptions(null, null, null, null);

    /** Prior mean (n) and covariance (n×n rows). */
    public record PriorDocument(double[] mean, double[][] covariance) {
    }

    /** These options with each field {@code override} sets taken from it, and the others (the prior among them) kept. */
    public TraceOptions overriddenBy(TraceOptions override) {
        return new TraceOptions(override.formulation != null ? override.formulation : formulation,
                override.estimateOffsets != null ? override.estimateOffsets : estimateOffsets,
                override.referenceTime != null ? override.referenceTime : referenceTime,
                override.prior != null ? override.prior : prior);
    }

    /** The same options with another reference time (epoch seconds), or none. */
    public TraceOptions withReferenceTime(Double seconds) {
        return new TraceOptions(formulation, estimateOffsets, seconds, prior);
    }

    /** The engine's options; the prior's shape is checked against n. */
    public EstimationOptions toEstimationOptions(int states, boolean keepSeries) {
        EstimationOptions options = EstimationOptions.defaults().withKeepSeries(keepSeries)
                .withFormulation(parsedFormulation())
                .withOffsets(Boolean.TRUE.equals(estimateOffsets))
                .withReferenceTime(referenceTime);
        if (prior != null) {
            options = options.withPrior(toPrior(states));
        }
        return options;
    }

    private Formulation parsedFormulation() {
        return formulation("options.formulation", formulation);
    }

    /**
     * The formulation a name stands for (none: sampled); a name that stands for none is refused
     * naming {@code field}, "options.formulation" in a JSON body, "formulation" in a CSV post's query.
     */
    public static Formulation formulation(String field, String name) {
        if (name == null || name.equals("sampled")) {
            return Formulation.SAMPLED;
        }
        if (name.equals("continuous")) {
            return Formulation.CONTINUOUS;
        }
        if (name.equals("process_noise")) {
            return Formulation.PROCESS_NOISE;
        }
        throw new InputException(field, "got " + FieldValues.quoted(name) + ", expected \"sampled\", \"continuous\" or \"process_noise\"");
    }

    private Prior toPrior(int states) {
        if (prior.mean() == null || prior.covariance() == null) {
            throw new InputException("options.prior", "got an incomplete prior, expected mean and covariance");
        }
        if (prior.mean().length != states) {
            throw new InputException("options.prior.mean", "got " + Counted.of(prior.mean().length, "value") + ", expected " + states);
        }
        double[][] cov = prior.covariance();
        if (cov.length != states) {
            throw new InputException("options.prior.covariance", "got " + Counted.of(cov.length, "row") + ", expected " + states);
        }
        double[] flat = new double[states * states];
        for (int i = 0; i < states; i++) {
            if (cov[i] == null || cov[i].length != states) {
                throw new InputException("options.prior.covariance[" + i + "]", "got " + (cov[i] == null ? "null"
                        : Counted.of(cov[i].length, "column")) + ", expected " + states + " columns");
            }
            System.arraycopy(cov[i], 0, flat, i * states, states);
        }
        return new Prior(prior.mean().clone(), flat);
    }
}
