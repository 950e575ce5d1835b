package backstate.api;

import backstate.estimation.SamplingPlanner;
import backstate.estimation.StateSpaceModel;
import backstate.formats.InputException;
import backstate.formats.ModelDocument;
import backstate.formats.Quantity;
import backstate.text.Figure;
import java.util.Arrays;
import java.util.List;
import java.util.Map;

/**
 * The body of a planning request, by name: which outputs, σ per output and target standard
 * error per state. {@link #toPlan} checks it against the model and turns names into indices;
 * a name the model lacks or a number out of range is a 400 naming the field.
 */
record PlanRequest(Double samplePeriod, List<Double> horizons, List<List<String>> outputSubsets,
                   Map<String, Double> noiseSigma, Map<String, Double> targetStdErrors) {
    /** Candidate horizons per request: enough for any sweep a person reads as a table. */
    static final int MAX_HORIZONS = 100;
    /** Output subsets per request: one per output and then some combinations. */
    static final int MAX_SUBSETS = 64;
    /** How far from a whole number of microseconds a period may be, relative: decimal seconds such as 0.1 are not exact doubles. */
    static final double WHOLE_MICROS_SLACK = 1e-9;

    SamplingPlanner.Plan toPlan(ModelDocument document, StateSpaceModel model) {
        List<String> outputs = document.outputs().stream().map(Quantity::name).toList();
        List<String> states = document.states().stream().map(Quantity::name).toList();
        double period = wholeMicroseconds("samplePeriod", positive("samplePeriod", samplePeriod));
        if (horizons == null || horizons.isEmpty()) {
            throw new InputException("horizons", "got nothing, expected a list of window lengths in seconds");
        }
        if (horizons.size() > MAX_HORIZONS) {
            throw new InputException("horizons", "got " + horizons.size() + ", expected at most " + MAX_HORIZONS);
        }
        double[] h = new double[horizons.size()];
        for (int i = 0; i < h.length; i++) {
            h[i] = positive("horizons[" + i + "]", horizons.get(i));
            if (i > 0 && !(h[i] > h[i - 1])) {
                throw new InputException("horizons[" + i + "]", "got " + h[i] + " after " + h[i - 1]
                        + ", expected strictly increasing horizons");
            }
        }
        int[][] subsets = subsets(outputs);
        double[] sigma = sigma(outputs, model, subsets);
        double[] targets = targets(states);
        return new SamplingPlanner.Plan(period, h, subsets, sigma, targets);
    }

    /**
     * A period of whole microseconds, as the planned sample times are kept (to the microsecond, as a
     * trace's): a shorter or fractional one would be planned on other times than asked for.
     */
    private static double wholeMicroseconds(String field, double seconds) {
        double micros = seconds * 1e6;
        if (!(micros >= 1 - WHOLE_MICROS_SLACK) || Math.abs(micros - Math.rint(micros)) > WHOLE_MICROS_SLACK * micros) {
            throw new InputException(field, "got " + Figure.plain(seconds) + " s, expected a whole number of microseconds"
                    + " (sample times are kept to the microsecond)");
        }
        return seconds;
    }

    /** All outputs together when no subsets are given. */
    private int[][] subsets(List<String> outputs) {
        if (outputSubsets == null) {
            int[] all = new int[outputs.size()];
            Arrays.setAll(all, i -> i);
            return new int[][] {all};
        }
        if (outputSubsets.isEmpty() || outputSubsets.size() > MAX_SUBSETS) {
            throw new InputException("outputSubsets", "got " + outputSubsets.size() + " subsets, expected 1-" + MAX_SUBSETS);
        }
        int[][] out = new int[outputSubsets.size()][];
        for (int i = 0; i < out.length; i++) {
            List<String> names = outputSubsets.get(i);
            if (names == null || names.isEmpty()) {
                throw new InputException("outputSubsets[" + i + "]", "got nothing, expected at least one output name");
            }
            out[i] = new int[names.size()];
            for (int j = 0; j < names.size(); j++) {
                String field = "outputSubsets[" + i + "][" + j + "]";
                int index = indexOf(outputs, names.get(j), field, "outputs");
                if (names.subList(0, j).contains(names.get(j))) {
                    throw new InputException(field, "got " + Params.quoted(names.get(j)) + " twice, expected distinct outputs");
                }
                out[i][j] = index;
            }
        }
        return out;
    }

    /** The request's σ, else the model's default, for every output a subset measures. */
    private double[] sigma(List<String> outputs, StateSpaceModel model, int[][] subsets) {
        double[] sigma = new double[outputs.size()];
        Arrays.fill(sigma, Double.NaN);
        double[] defaults = model.defaultNoiseSigma();
        if (defaults != null) {
            System.arraycopy(defaults, 0, sigma, 0, sigma.length);
        }
        if (noiseSigma != null) {
            noiseSigma.forEach((name, value) -> {
                String field = "noiseSigma." + name;
                sigma[indexOf(outputs, name, field, "outputs")] = positive(field, value);
            });
        }
        for (int[] subset : subsets) {
            for (int o : subset) {
                if (Double.isNaN(sigma[o])) {
                    throw new InputException("noiseSigma." + outputs.get(o), "got nothing, expected a σ: the model gives "
                            + "no default noise level for this output");
                }
            }
        }
        return sigma;
    }

    private double[] targets(List<String> states) {
        if (targetStdErrors == null || targetStdErrors.isEmpty()) {
            return null;
        }
        double[] targets = new double[states.size()];
        Arrays.fill(targets, Double.NaN);
        targetStdErrors.forEach((name, value) -> {
            String field = "targetStdErrors." + name;
            targets[indexOf(states, name, field, "states")] = positive(field, value);
        });
        return targets;
    }

    private static int indexOf(List<String> names, String name, String field, String what) {
        int index = name == null ? -1 : names.indexOf(name);
        if (index < 0) {
            throw new InputException(field, "got " + Params.quoted(name) + ", expected one of the model's " + what + " "
                    + names);
        }
        return index;
    }

    private static double positive(String field, Double value) {
        if (value == null || !(value > 0.0) || value.isInfinite()) {
            throw new InputException(field, "got " + value + ", expected a finite number > 0");
        }
        return value;
    }
}
