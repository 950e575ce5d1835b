package backstate.formats;

import backstate.estimation.Estimate;
import backstate.estimation.EstimationOptions;
import backstate.estimation.EstimationResult;
import backstate.estimation.InitialStateEstimator;
import backstate.estimation.KeptSamples;
import backstate.estimation.StateSpaceModel;
import backstate.estimation.Unobservable;
import backstate.text.Counted;
import java.util.List;
import java.util.Locale;

/** The one code path from documents to an estimate, shared by the service's jobs and the offline CLI. */
public final class DocumentSolver {
    private DocumentSolver() {
    }

    /** What a solve produced: an estimate with its published document, or the unobservable directions. */
    public sealed interface Outcome {
        record Solved(Estimate estimate, EstimateDocument document) implements Outcome {
        }

        /** The directions the data leave undetermined, as structured values, and a one-line reason. */
        record NotObservable(String message, List<UnobservableDirection> directions) implements Outcome {
        }
    }

    public static Outcome solve(ModelDocument modelDocument, ParsedTrace parsed, boolean keepSeries, Limits limits) {
        return solve(CheckedModel.of(modelDocument, limits), parsed, keepSeries);
    }

    /** As above, for a model already checked (a published version's, checked once). */
    public static Outcome solve(CheckedModel checked, ParsedTrace parsed, boolean keepSeries) {
        return solve(checked, parsed, keepSeries, 1);
    }

    /**
     * Solves keeping the series at most {@code maxPoints} (≥ 2) points long: samples 0, s, 2s, … and
     * the last, s = ⌈(N − 1) / (maxPoints − 1)⌉, so a plot of a long trace never holds all N yet
     * reaches the window's end.
     */
    public static Outcome solveWithSeries(CheckedModel checked, ParsedTrace parsed, int maxPoints) {
        return solve(checked, parsed, true, KeptSamples.strideFor(parsed.trace().samples(), maxPoints));
    }

    private static Outcome solve(CheckedModel checked, ParsedTrace parsed, boolean keepSeries, int seriesStride) {
        ModelDocument modelDocument = checked.document();
        StateSpaceModel model = checked.engine();
        TraceOptions options = parsed.options() == null ? TraceOptions.NONE : parsed.options();
        EstimationOptions engineOptions = options.toEstimationOptions(model.states(), keepSeries)
                .withSeriesStride(seriesStride);
        EstimationResult result = InitialStateEstimator.solve(model, parsed.trace(), engineOptions);
        if (result instanceof Estimate estimate) {
            String formulation = engineOptions.formulation().name().toLowerCase(Locale.ROOT);
            return new Outcome.Solved(estimate, EstimateDocument.of(estimate, modelDocument, formulation));
        }
        return notObservable((Unobservable) result, modelDocument);
    }

    private static Outcome.NotObservable notObservable(Unobservable u, ModelDocument model) {
        List<UnobservableDirection.Unknown> unknowns = unknowns(model, u.unknownNames().size());
        List<UnobservableDirection> directions = u.directions().stream()
                .map(d -> UnobservableDirection.of(d, unknowns)).toList();
        List<String> largest = directions.stream().map(UnobservableDirection::largestComponent).toList();
        String along = largest.size() == 1 ? "mostly along " + largest.get(0)
                : String.join(", ", largest.stream().map(name -> "one mostly along " + name).toList());
        String message = "unobservable: the trace does not determine " + Counted.of(directions.size(), "direction")
                + " of the unknowns (" + along + "); " + remedy(largest);
        return new Outcome.NotObservable(message, directions);
    }

    /**
     * What would fix the directions, by what they mostly lie along: a prior only bears on states, and
     * an offset is told apart only from moving states and from an output with values.
     */
    private static String remedy(List<String> largest) {
        boolean offsets = largest.stream().anyMatch(name -> name.startsWith(UnobservableDirection.Unknown.OFFSET_PREFIX));
        boolean states = largest.stream().anyMatch(name -> !name.startsWith(UnobservableDirection.Unknown.OFFSET_PREFIX));
        String forStates = "add a prior, measure another output, or record longer or more often";
        String forOffsets = "estimate no offsets for this trace (an offset is told from the states only when they move"
                + " in the window, and only on an output with values)";
        return offsets && states ? forStates + "; or " + forOffsets : offsets ? forOffsets : forStates;
    }

    /** The unknowns in the estimator's order, as the estimate document names them (states, then "offset:" outputs). */
    private static List<UnobservableDirection.Unknown> unknowns(ModelDocument model, int count) {
        return EstimateDocument.unknownNames(model, count).stream().map(UnobservableDirection.Unknown::fromDocumentName).toList();
    }
}
