package backstate.formats;

import backstate.estimation.ChannelDiagnostics;
import backstate.estimation.Conditioning;
import backstate.estimation.Estimate;
import backstate.estimation.Flag;
import backstate.estimation.InnovationStatistics;
import com.fasterxml.jackson.annotation.JsonInclude;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;

/**
 * The published form of an estimate (API responses, stored summaries and the CLI's output): the
 * engine's result with the model's names attached, non-finite numbers as null.
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record EstimateDocument(String formulation, List<Value> states, List<Value> offsets, List<String> unknowns,
                               List<List<Double>> covariance, Double sigmaScale, StateAtTime reference,
                               StateAtTime windowEnd, ConditioningDocument conditioning, Residuals residuals,
                               List<String> flags, List<Innovations> innovations) {

    /**
     * One output's normalised innovations (process-noise formulation only): count, mean (≈ 0),
     * variance (≈ 1) and Ljung–Box whiteness test when the model and its noise levels fit.
     */
    public record Innovations(String output, int samples, Double mean, Double variance, Double ljungBoxQ,
                              int ljungBoxLags, Double ljungBoxP) {
    }

    /** One estimated quantity with its standard errors and 95 % interval. */
    public record Value(String name, String unit, Double estimate, Double standardError, Double standardErrorScaled,
                        Double lower, Double upper) {
    }

    /** The state at one time of the window (seconds, the trace's clock), with its covariance. */
    public record StateAtTime(Double time, List<Value> states, List<List<Double>> covariance) {
    }

    public record ConditioningDocument(List<List<Double>> information, List<Double> eigenvalues, Double conditionNumber,
                                       int rank, Double rankTolerance, List<Double> weakestDirection,
                                       Double weakestStandardDeviation, int dataRank) {
    }

    public record Residuals(Double chiSquare, int degreesOfFreedom, Double pValue, List<Channel> channels) {
    }

    public record Channel(String output, int samples, Double sigma, String sigmaSource, Double rms, Double maxAbs,
                          Double rSquared, Double ljungBoxQ, int ljungBoxLags, Double ljungBoxP, int outliers) {
    }

    public static EstimateDocument of(Estimate e, ModelDocument model, String formulation) {
        int n = model.states().size();
        int q = e.solution().length;
        List<Value> states = new ArrayList<>();
        for (int i = 0; i < n; i++) {
            states.add(value(e, i, model.states().get(i)));
        }
        List<Value> offsets = null;
        if (q > n) {
            offsets = new ArrayList<>();
            for (int j = 0; j < q - n; j++) {
                offsets.add(value(e, n + j, model.outputs().get(j)));
            }
        }
        return new EstimateDocument(formulation, states, offsets, unknownNames(model, q), rows(e.covariance(), q),
                num(e.sigmaScale()), stateAt(e.reference(), model), stateAt(e.windowEnd(), model),
                conditioning(e.conditioning(), q),
                residuals(e, model), flagNames(e), innovations(e, model));
    }

    private static List<Innovations> innovations(Estimate e, ModelDocument model) {
        if (e.innovations() == null) {
            return null;
        }
        List<Innovations> out = new ArrayList<>();
        for (int j = 0; j < e.innovations().size(); j++) {
            InnovationStatistics s = e.innovations().get(j);
            out.add(new Innovations(model.outputs().get(j).name(), s.samples(), num(s.mean()), num(s.variance()),
                    num(s.ljungBoxQ()), s.ljungBoxLags(), num(s.ljungBoxP())));
        }
        return out;
    }

    /** The flags as lower-case words, the same words the API filters on. */
    public static List<String> flagNames(Estimate e) {
        return e.flags().stream().map(EstimateDocument::flagName).toList();
    }

    public static String flagName(Flag f) {
        return f.name().toLowerCase(Locale.ROOT);
    }

    /** Unknown names in vector order: state names, then "offset:" + output name. */
    public static List<String> unknownNames(ModelDocument model, int q) {
        List<String> names = new ArrayList<>();
        model.states().forEach(s -> names.add(s.name()));
        for (int j = 0; names.size() < q; j++) {
            names.add("offset:" + model.outputs().get(j).name());
        }
        return names;
    }

    private static Value value(Estimate e, int i, Quantity quantity) {
        return new Value(quantity.name(), quantity.unit(), num(e.solution()[i]), num(e.standardErrors()[i]),
                num(e.standardErrorsScaled()[i]), num(e.intervalLower()[i]), num(e.intervalUpper()[i]));
    }

    private static StateAtTime stateAt(Estimate.StateAt at, ModelDocument model) {
        if (at == null) {
            return null;
        }
        int n = at.state().length;
        List<Value> states = new ArrayList<>();
        for (int i = 0; i < n; i++) {
            Quantity s = model.states().get(i);
            states.add(new Value(s.name(), s.unit(), num(at.state()[i]), num(at.standardErrors()[i]),
                    num(at.standardErrorsScaled()[i]), num(at.lower()[i]), num(at.upper()[i])));
        }
        return new StateAtTime(at.time(), states, rows(at.covariance(), n));
    }

    private static ConditioningDocument conditioning(Conditioning c, int q) {
        return new ConditioningDocument(rows(c.information(), q), list(c.eigenvalues()), num(c.conditionNumber()),
                c.rank(), num(c.rankTolerance()), list(c.weakestDirection()), num(c.weakestStd()), c.dataRank());
    }

    private static Residuals residuals(Estimate e, ModelDocument model) {
        List<Channel> channels = new ArrayList<>();
        for (int j = 0; j < e.channels().size(); j++) {
            ChannelDiagnostics d = e.channels().get(j);
            channels.add(new Channel(model.outputs().get(j).name(), d.samples(), num(d.sigma()),
                    d.sigmaSource().name().toLowerCase(Locale.ROOT), num(d.rms()), num(d.maxAbs()), num(d.rSquared()),
                    num(d.ljungBoxQ()), d.ljungBoxLags(), num(d.ljungBoxP()), d.outliers()));
        }
        return new Residuals(num(e.chiSquare()), e.degreesOfFreedom(), num(e.chiSquareP()), channels);
    }

    /** A finite double, or null: JSON has no NaN or infinity. */
    public static Double num(double v) {
        return Double.isFinite(v) ? v : null;
    }

    public static List<Double> list(double[] v) {
        List<Double> out = new ArrayList<>(v.length);
        for (double x : v) {
            out.add(num(x));
        }
        return out;
    }

    public static List<List<Double>> rows(double[] m, int cols) {
        List<List<Double>> out = new ArrayList<>();
        for (int i = 0; i < m.length / cols; i++) {
            out.add(list(java.util.Arrays.copyOfRange(m, i * cols, (i + 1) * cols)));
        }
        return out;
    }
}
