package backstate.formats;

import backstate.estimation.Trace;
import backstate.text.Counted;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * Columns of a trace keyed by channel name while it is being read, assembled into the engine's
 * {@link Trace} in the model's channel order. An output channel the trace lacks is all missing;
 * every input must be present because the forced response depends on it.
 */
final class TraceColumns {
    private final ModelDocument model;
    private final Limits limits;
    private final TraceTimes times;
    private final Map<String, DoubleColumn> outputs = new LinkedHashMap<>();
    private final Map<String, DoubleColumn> inputs = new LinkedHashMap<>();
    private final Map<String, Double> noiseSigma = new LinkedHashMap<>();

    TraceColumns(ModelDocument model, Limits limits) {
        this.model = model;
        this.limits = limits;
        this.times = new TraceTimes(limits.maxSamples());
    }

    TraceTimes times() {
        return times;
    }

    /** The column for an output channel named in a body; unknown and repeated names are rejected. */
    DoubleColumn output(String name, String field) {
        return claim(outputs, model.outputs(), name, field, "outputs");
    }

    DoubleColumn input(String name, String field) {
        return claim(inputs, model.inputsOrEmpty(), name, field, "inputs");
    }

    /** The model's inputs, by name. */
    List<String> inputNames() {
        return names(model.inputsOrEmpty());
    }

    /** The model's inputs no column has been claimed for yet, in the model's order. */
    List<String> unclaimedInputs() {
        return inputNames().stream().filter(name -> !inputs.containsKey(name)).toList();
    }

    boolean isOutput(String name) {
        return model.outputs().stream().anyMatch(q -> q.name().equals(name));
    }

    boolean isInput(String name) {
        return model.inputsOrEmpty().stream().anyMatch(q -> q.name().equals(name));
    }

    /** The model's outputs, then its inputs, by name. */
    List<String> channelNames() {
        List<String> all = new java.util.ArrayList<>(names(model.outputs()));
        all.addAll(names(model.inputsOrEmpty()));
        return all;
    }

    void noiseSigma(String name, double sigma, String field) {
        if (!isOutput(name)) {
            throw new InputException(field, "got unknown output \"" + name + "\", expected one of " + names(model.outputs()));
        }
        noiseSigma.put(name, sigma);
    }

    /** The trace assembled into the engine's row-major form. */
    Trace assemble() {
        return finish(TraceOptions.NONE).assemble().trace();
    }

    /**
     * The columns in the model's order, checked: every column as long as the times, every input
     * present. The times are normalised here ({@link TraceTimes#normalised}); the channel columns
     * are handed on as read, not copied.
     */
    ParsedColumns finish(TraceOptions options) {
        List<Quantity> outs = model.outputs();
        List<Quantity> ins = model.inputsOrEmpty();
        double[] t = times.normalised();
        int n = t.length;
        DoubleColumn[] y = new DoubleColumn[outs.size()];
        for (int j = 0; j < y.length; j++) {
            y[j] = outputs.get(outs.get(j).name());
            requireLength(y[j], n);
        }
        DoubleColumn[] u = new DoubleColumn[ins.size()];
        for (int i = 0; i < u.length; i++) {
            u[i] = inputs.get(ins.get(i).name());
            if (u[i] == null) {
                throw new InputException("inputs." + ins.get(i).name(), "got nothing, expected the known input's values");
            }
            requireLength(u[i], n);
        }
        return new ParsedColumns(t, times.numbers(), y, u, sigmaArray(outs), options);
    }

    private double[] sigmaArray(List<Quantity> outs) {
        if (noiseSigma.isEmpty()) {
            return null;
        }
        double[] sigma = new double[outs.size()];
        for (int j = 0; j < sigma.length; j++) {
            sigma[j] = noiseSigma.getOrDefault(outs.get(j).name(), Double.NaN);
        }
        return sigma;
    }

    private DoubleColumn claim(Map<String, DoubleColumn> columns, List<Quantity> allowed, String name, String field,
                               String kind) {
        ModelDocument.requireName(field, name, limits);
        if (allowed.stream().noneMatch(q -> q.name().equals(name))) {
            throw new InputException(field, "got unknown " + kind + " channel \"" + name + "\", expected one of " + names(allowed));
        }
        if (columns.containsKey(name)) {
            throw new InputException(field, "got channel \"" + name + "\" twice, expected it once");
        }
        DoubleColumn column = new DoubleColumn(field, limits.maxSamples());
        columns.put(name, column);
        return column;
    }

    private void requireLength(DoubleColumn column, int n) {
        if (column != null && column.size() != n) {
            throw new InputException(column.field(), "got " + Counted.of(column.size(), "value") + ", expected " + n
                    + " (one per time)");
        }
    }

    private static List<String> names(List<Quantity> list) {
        return list.stream().map(Quantity::name).toList();
    }
}
