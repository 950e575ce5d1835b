package backstate.api;

import backstate.estimation.SamplingPlanner;
import backstate.formats.EstimateCaution;
import backstate.formats.EstimateDocument;
import backstate.text.Counted;
import backstate.text.Figure;
import backstate.text.Listed;
import com.fasterxml.jackson.annotation.JsonInclude;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;

/** The answer to a planning request: per output subset, per horizon, the predicted standard errors by state name. */
final class PlanViews {
    private PlanViews() {
    }

    @JsonInclude(JsonInclude.Include.NON_NULL)
    record Plan(String family, int version, double samplePeriod, List<String> states, Map<String, Double> targetStdErrors,
                List<Subset> subsets, String note) {
    }

    @JsonInclude(JsonInclude.Include.NON_NULL)
    record Subset(List<String> outputs, Map<String, Double> noiseSigma, boolean observable,
                  List<Map<String, Double>> unobservableDirections, List<Horizon> horizons,
                  Double shortestHorizonMeetingTargets, String verdict, String reason) {
    }

    @JsonInclude(JsonInclude.Include.NON_NULL)
    record Horizon(double horizon, long samples, long equations, int rank, Double conditionNumber,
                   Map<String, Double> standardErrors, Map<String, Double> weakestDirection,
                   Double weakestStandardDeviation, List<Map<String, Double>> unobservableDirections,
                   Boolean meetsTargets) {
    }

    /** Direction weights smaller than this are left out of a reason's words (a direction has unit length). */
    static final double SMALLEST_WEIGHT_IN_WORDS = 1e-3;

    /** What the numbers are and are not. */
    static final String NOTE = "Predicted from the model alone: standard errors a trace of this plan would get if the "
            + "model were exact and the noise white with the given sigma. Real traces with model error do worse. "
            + EstimateCaution.TEXT;

    static Plan of(String family, int version, List<String> states, List<String> outputs, SamplingPlanner.Plan plan,
                   List<SamplingPlanner.SubsetPlan> result) {
        List<Subset> subsets = new ArrayList<>();
        for (SamplingPlanner.SubsetPlan s : result) {
            subsets.add(subset(states, outputs, plan, s));
        }
        return new Plan(family, version, plan.samplePeriod(), states, byName(states, plan.targetStdErrors()), subsets, NOTE);
    }

    private static Subset subset(List<String> states, List<String> outputs, SamplingPlanner.Plan plan,
                                 SamplingPlanner.SubsetPlan s) {
        List<String> names = new ArrayList<>();
        Map<String, Double> sigma = new LinkedHashMap<>();
        for (int o : s.outputs()) {
            names.add(outputs.get(o));
            sigma.put(outputs.get(o), plan.noiseSigma()[o]);
        }
        List<Horizon> horizons = new ArrayList<>();
        for (SamplingPlanner.Prediction p : s.predictions()) {
            horizons.add(new Horizon(p.horizon(), p.samples(), p.equations(), p.rank(),
                    EstimateDocument.num(p.conditionNumber()), standardErrors(states, p.standardErrors()),
                    byName(states, p.weakestDirection()), EstimateDocument.num(p.weakestStd()),
                    directions(states, p.unobservableDirections()), p.meetsTargets()));
        }
        Double shortest = s.shortestMeetingTargets() < 0 ? null : s.predictions().get(s.shortestMeetingTargets()).horizon();
        return new Subset(names, sigma, s.observable(), directions(states, s.unobservableDirections()), horizons,
                shortest, s.verdict().name().toLowerCase(Locale.ROOT), reason(states, plan, s));
    }

    /** One sentence on the verdict, naming the states or directions at fault, numbers to three digits. */
    private static String reason(List<String> states, SamplingPlanner.Plan plan, SamplingPlanner.SubsetPlan s) {
        List<SamplingPlanner.Prediction> p = s.predictions();
        SamplingPlanner.Prediction longest = p.get(p.size() - 1);
        return switch (s.verdict()) {
            case MEETS_TARGETS -> "the shortest candidate horizon meeting every target is "
                    + Figure.exact(p.get(s.shortestMeetingTargets()).horizon()) + " s";
            case NO_TARGETS -> "no targets given";
            case UNOBSERVABLE_WITH_THESE_OUTPUTS -> "no horizon meets the targets: with these outputs, x0 along "
                    + directionsInWords(states, s.unobservableDirections())
                    + " is unobservable at any horizon and sample period";
            case RANK_DEFICIENT_AT_EVERY_HORIZON -> "no candidate horizon determines x0: the longest ("
                    + Figure.exact(longest.horizon()) + " s, " + Counted.of(longest.samples(), "sample")
                    + ") leaves x0 along " + directionsInWords(states, longest.unobservableDirections())
                    + " undetermined; take more samples, or a sample period that does not alias a mode";
            case TARGETS_NOT_MET -> "no candidate horizon meets the targets; at the longest"
                    + (longestDetermined(p) == longest ? "" : " that determines x0") + " ("
                    + Figure.exact(longestDetermined(p).horizon()) + " s) the standard errors miss them: "
                    + missed(states, plan.targetStdErrors(), longestDetermined(p).standardErrors());
        };
    }

    /** The longest horizon with standard errors (a longer one may leave a direction numerically undetermined). */
    private static SamplingPlanner.Prediction longestDetermined(List<SamplingPlanner.Prediction> p) {
        for (int k = p.size() - 1; k > 0; k--) {
            if (p.get(k).standardErrors() != null) {
                return p.get(k);
            }
        }
        return p.get(0);
    }

    /** "cargo_core 10.9 (target 0.5), wall 4 (target 1)": the states whose standard error exceeds its target. */
    private static String missed(List<String> states, double[] targets, double[] se) {
        if (se == null) {
            return "x0 is not determined";
        }
        List<String> out = new ArrayList<>();
        for (int i = 0; i < states.size(); i++) {
            if (!Double.isNaN(targets[i]) && !(se[i] <= targets[i])) {
                out.add(states.get(i) + " " + Figure.of(se[i]) + " (target " + Figure.of(targets[i]) + ")");
            }
        }
        return String.join(", ", out);
    }

    /** "the direction 0.707·a − 0.707·b", or "the directions (c) and (0.6·a + 0.8·b)". */
    static String directionsInWords(List<String> states, List<double[]> directions) {
        List<String> words = directions.stream().map(d -> directionInWords(states, d)).toList();
        if (words.size() == 1) {
            return "the direction " + words.get(0);
        }
        return "the directions " + Listed.of(words.stream().map(w -> "(" + w + ")").toList(), "and");
    }

    /**
     * A unit direction as a sum over the states, three digits a weight, weights below 0.001 left out
     * (the answer's directions carry every digit); a weight of 1 is the state alone.
     */
    static String directionInWords(List<String> states, double[] direction) {
        StringBuilder out = new StringBuilder();
        for (int i = 0; i < direction.length; i++) {
            double weight = direction[i];
            if (!(Math.abs(weight) >= SMALLEST_WEIGHT_IN_WORDS)) {
                continue;
            }
            String magnitude = Figure.of(Math.abs(weight));
            String term = ("1".equals(magnitude) ? "" : magnitude + "·") + states.get(i);
            if (out.length() == 0) {
                out.append(weight < 0 ? "−" : "").append(term);
            } else {
                out.append(weight < 0 ? " − " : " + ").append(term);
            }
        }
        return out.toString();
    }

    private static List<Map<String, Double>> directions(List<String> states, List<double[]> directions) {
        return directions.stream().map(d -> byName(states, d)).toList();
    }

    /** By state; empty when the plan leaves x0 undetermined (the estimator then answers no estimate at all). */
    private static Map<String, Double> standardErrors(List<String> states, double[] se) {
        return se == null ? Map.of() : byName(states, se);
    }

    /** A vector over the states as {name: value}, NaN entries left out; null for a null vector. */
    static Map<String, Double> byName(List<String> names, double[] values) {
        if (values == null) {
            return null;
        }
        Map<String, Double> out = new LinkedHashMap<>();
        for (int i = 0; i < values.length; i++) {
            if (!Double.isNaN(values[i])) {
                out.put(names.get(i), EstimateDocument.num(values[i]));
            }
        }
        return out;
    }
}
