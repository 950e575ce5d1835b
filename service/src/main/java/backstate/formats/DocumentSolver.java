package backstate.formats;

import backstate.estimation.Estimate;
import backstate.estimation.EstimationOptions;
import backstate.estimation.EstimationResult;
import backstate.estimation.InitialStateEstimator;
import backstate.estimation.StateSpaceModel;
import backstate.estimation.Unobservable;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;

/** The one code path from documents to an estimate, shared by the service's jobs and the offline CLI. */
public final class DocumentSolver {
    private DocumentSolver() {
    }

    /** What a solve produced: an estimate with its published document, or the unobservable directions. */
    public sealed interface Outcome {
        record Solved(Estimate estimate, EstimateDocument document) implements Outcome {
        }

        record NotObservable(String message, List<Map<String, Double>> directions) implements Outcome {
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
     * Solves keeping the series at most {@code maxPoints} points long: every s-th sample,
     * s = ⌈N / maxPoints⌉, so a plot of a long trace never holds all N.
     */
    public static Outcome solveWithSeries(CheckedModel checked, ParsedTrace parsed, int maxPoints) {
        int samples = parsed.trace().samples();
        return solve(checked, parsed, true, Math.max(1, (samples + maxPoints - 1) / maxPoints));
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
        List<String> names = EstimateDocument.unknownNames(model, u.unknownNames().size());
        List<Map<String, Double>> directions = new ArrayList<>();
        for (double[] d : u.directions()) {
            Map<String, Double> named = new LinkedHashMap<>();
            for (int i = 0; i < d.length; i++) {
                named.put(names.get(i), EstimateDocument.num(d[i]));
            }
            directions.add(named);
        }
        String message = "unobservable: the trace does not determine " + directions.size()
                + " direction(s) of the unknowns " + directions
                + "; add a prior, measure another output, or record longer";
        return new Outcome.NotObservable(message, directions);
    }
}
