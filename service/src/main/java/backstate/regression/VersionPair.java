package backstate.regression;

import backstate.estimation.ModelException;
import backstate.formats.DocumentSolver;
import backstate.formats.InputException;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedTrace;
import backstate.formats.RecordingTime;
import backstate.formats.TraceOptions;

/**
 * The two versions of a run, solving stored traces through {@link DocumentSolver} (the estimate
 * jobs' code path) and handing each pair of fits to the report. A version that declares process
 * noise solves every trace with the {@code process_noise} formulation (and no reference time, which
 * a run does not report), so that publishing a candidate with process noise and running it against
 * the baseline asks "does process noise explain the fleet better?"; a version without solves each
 * trace with the options it was posted with.
 */
public final class VersionPair {
    /** The formulation name a version with process noise is solved with. */
    static final String PROCESS_NOISE = "process_noise";

    private final ModelDocument baseline;
    private final ModelDocument candidate;
    private final Limits limits;

    public VersionPair(ModelDocument baseline, ModelDocument candidate, Limits limits) {
        this.baseline = baseline;
        this.candidate = candidate;
        this.limits = limits;
    }

    /**
     * Solves one stored trace under both versions, its columns put in each version's order, and
     * adds the comparison to the report.
     *
     * @param storedModel the version the trace was posted for, whose column order it is stored in
     */
    public void compare(RegressionReport report, String unitId, String traceId, String receivedAt, int storedVersion,
                        ModelDocument storedModel, ParsedTrace stored) {
        report.add(unitId, traceId, RecordingTime.format(stored.trace().time(0)), receivedAt, storedVersion,
                fit(baseline, storedModel, stored),
                fit(candidate, storedModel, stored));
    }

    /**
     * A trace that does not fit a version (its stored prior has another size, a discrete version
     * meets an irregular clock) is that version's result for the trace, not a failed run.
     */
    private Fit fit(ModelDocument model, ModelDocument storedModel, ParsedTrace stored) {
        try {
            ParsedTrace trace = ChannelMap.reorder(stored, storedModel, model);
            if (declaresProcessNoise(model)) {
                TraceOptions own = trace.options() == null ? TraceOptions.NONE : trace.options();
                trace = new ParsedTrace(trace.trace(), own.withReferenceTime(null)
                        .overriddenBy(new TraceOptions(PROCESS_NOISE, null, null, null)));
            }
            return Fit.of(DocumentSolver.solve(model, trace, false, limits), model);
        } catch (ModelException e) {
            return Fit.notSolved(Fit.Status.INVALID, e.withTimeWords(RecordingTime::words).getMessage());
        } catch (InputException e) {
            return Fit.notSolved(Fit.Status.INVALID, e.getMessage());
        }
    }

    static boolean declaresProcessNoise(ModelDocument model) {
        return model.processNoise() != null;
    }
}
