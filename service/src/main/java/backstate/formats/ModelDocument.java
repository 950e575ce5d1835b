package backstate.formats;

import backstate.estimation.ModelException;
import backstate.estimation.StateSpaceModel;
import backstate.text.Counted;
import com.fasterxml.jackson.annotation.JsonIgnore;
import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.databind.annotation.JsonDeserialize;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.regex.Pattern;

/**
 * A model version as users write it (the body of a publish request and the CLI's model file):
 * time domain, named states/outputs/inputs with units, and the matrices A, B, C, D (read by
 * {@link MatrixReader}, which names an entry that is not a number), and optionally the process
 * noise that disturbs the states between samples ({@link ProcessNoiseDocument}).
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record ModelDocument(String description, String timeDomain, Double samplePeriod, List<Quantity> states,
                            List<Quantity> outputs, List<Quantity> inputs,
                            @JsonDeserialize(using = MatrixReader.class) double[][] a,
                            @JsonDeserialize(using = MatrixReader.class) double[][] b,
                            @JsonDeserialize(using = MatrixReader.class) double[][] c,
                            @JsonDeserialize(using = MatrixReader.class) double[][] d,
                            ProcessNoiseDocument processNoise) {
    /** Names: a letter, then letters, digits, '_', '-', '.'; they become CSV headers and JSON keys. */
    private static final Pattern NAME = Pattern.compile("[A-Za-z][A-Za-z0-9_.\\-]*");
    /** Longest description accepted (as for a family's); it is a label, not a document. */
    static final int MAX_DESCRIPTION = 2000;
    /**
     * Names a channel may not take: a trace CSV header's time column is {@code time} (or
     * {@code time since <RFC 3339 time>}, which no name can be: names hold no spaces).
     */
    static final Set<String> RESERVED_NAMES = Set.of("time");
    /** Longest unit of measure accepted ("degC", "kJ/(kg K)"); a longer one is hostile input. */
    static final int MAX_UNIT = 32;

    /** Validates names and shapes and builds the engine's model; errors name the field. */
    public StateSpaceModel toModel(Limits limits) {
        requireLength("description", description, MAX_DESCRIPTION);
        requireNames("states", states, limits, true);
        requireNames("outputs", outputs, limits, true);
        requireNames("inputs", inputs, limits, false);
        requireShapes();
        StateSpaceModel model = build();
        requireCount("states", states, model.states(), "rows of a");
        requireCount("outputs", outputs, model.outputs(), "rows of c");
        requireCount("inputs", inputs, model.inputs(), "columns of b");
        return processNoise == null ? model : withProcessNoise(model);
    }

    /** The model with its process noise; a bad shape, asymmetry or a negative eigenvalue is a 400 naming the field. */
    private StateSpaceModel withProcessNoise(StateSpaceModel model) {
        double[][] q = processNoise.toMatrix(model.states());
        try {
            return model.withProcessNoise(q, processNoise.fieldOf());
        } catch (ModelException e) {
            throw new InputException(e.field(), e.problem());
        }
    }

    /**
     * What a newly published version must also meet, beyond {@link #toModel}: matrix entries and
     * noise σ within {@link Limits#MAX_MAGNITUDE} and {@link Limits#MIN_SIGMA}, each name used once
     * across states, outputs and inputs, and none reserved, so that every trace form (a CSV header
     * names outputs and inputs side by side with time) can address every channel, and a noise σ
     * on outputs only. Stored versions published before these rules are not re-checked.
     */
    public void requirePublishable() {
        requireDistinctNames();
        for (String matrix : List.of("a", "b", "c", "d")) {
            double[][] rows = matrix.equals("a") ? a : matrix.equals("b") ? b : matrix.equals("c") ? c : d;
            for (int i = 0; rows != null && i < rows.length; i++) {
                for (int j = 0; rows[i] != null && j < rows[i].length; j++) {
                    Limits.requireMagnitude(matrix + "[" + i + "][" + j + "]", rows[i][j]);
                }
            }
        }
        if (processNoise != null) {
            processNoise.requirePublishable();
        }
        for (int j = 0; outputs != null && j < outputs.size(); j++) {
            if (outputs.get(j) != null && outputs.get(j).noiseSigma() != null) {
                Limits.requireSigma("outputs[" + j + "].noiseSigma", outputs.get(j).noiseSigma());
            }
        }
        requireNoSigma("states", states, "for noise driving the states, give processNoise");
        requireNoSigma("inputs", inputsOrEmpty(), "inputs are known exactly");
    }

    /** A σ on a state or an input would be ignored; it is refused so that nobody believes it was used. */
    private static void requireNoSigma(String group, List<Quantity> list, String instead) {
        for (int i = 0; list != null && i < list.size(); i++) {
            if (list.get(i) != null && list.get(i).noiseSigma() != null) {
                throw new InputException(group + "[" + i + "].noiseSigma", "got " + list.get(i).noiseSigma()
                        + ", expected none: a noise σ belongs to an output; " + instead);
            }
        }
    }

    private void requireDistinctNames() {
        Map<String, String> firstUse = new HashMap<>();
        for (String group : List.of("states", "outputs", "inputs")) {
            List<Quantity> list = group.equals("states") ? states : group.equals("outputs") ? outputs : inputsOrEmpty();
            for (int i = 0; list != null && i < list.size(); i++) {
                String name = list.get(i) == null ? null : list.get(i).name();
                String field = group + "[" + i + "].name";
                if (RESERVED_NAMES.contains(name)) {
                    throw new InputException(field, "got \"" + name + "\", a reserved name (the time column), expected another");
                }
                String earlier = name == null ? null : firstUse.putIfAbsent(name, field);
                if (earlier != null) {
                    throw new InputException(field, "got \"" + name + "\", already the name at " + earlier
                            + ", expected names unique across states, outputs and inputs");
                }
            }
        }
    }

    @JsonIgnore
    public boolean isDiscrete() {
        return "discrete".equals(timeDomain);
    }

    @JsonIgnore
    public List<Quantity> inputsOrEmpty() {
        return inputs == null ? List.of() : inputs;
    }

    private StateSpaceModel build() {
        double[] sigma = noiseSigma();
        if ("continuous".equals(timeDomain)) {
            if (samplePeriod != null) {
                throw new InputException("samplePeriod", "got " + samplePeriod + ", expected none for a continuous model");
            }
            return StateSpaceModel.continuous(a, b, c, d, sigma);
        }
        if ("discrete".equals(timeDomain)) {
            if (samplePeriod == null) {
                throw new InputException("samplePeriod", "got nothing, expected seconds per step for a discrete model");
            }
            return StateSpaceModel.discrete(a, b, c, d, samplePeriod, sigma);
        }
        throw new InputException("timeDomain", "got " + timeDomain + ", expected \"continuous\" or \"discrete\"");
    }

    private double[] noiseSigma() {
        if (outputs == null || outputs.stream().allMatch(o -> o.noiseSigma() == null)) {
            return null;
        }
        double[] sigma = new double[outputs.size()];
        for (int j = 0; j < sigma.length; j++) {
            Double s = outputs.get(j).noiseSigma();
            String field = "outputs[" + j + "].noiseSigma";
            if (s == null) {
                throw new InputException(field, "got nothing, expected a σ for every output or for none");
            }
            if (!(s > 0.0) || s.isInfinite()) {
                throw new InputException(field, "got " + s + ", expected a finite number > 0");
            }
            sigma[j] = s;
        }
        return sigma;
    }

    private static void requireNames(String field, List<Quantity> list, Limits limits, boolean required) {
        if (list == null || list.isEmpty()) {
            if (required) {
                throw new InputException(field, "got nothing, expected a list of named quantities");
            }
            return;
        }
        Map<String, Integer> seen = new HashMap<>();
        for (int i = 0; i < list.size(); i++) {
            Quantity item = list.get(i);
            String name = item == null ? null : item.name();
            requireName(field + "[" + i + "].name", name, limits);
            requireLength(field + "[" + i + "].unit", item.unit(), MAX_UNIT);
            Integer earlier = seen.putIfAbsent(name, i);
            if (earlier != null) {
                throw new InputException(field + "[" + i + "].name", "got \"" + name + "\", already the name at "
                        + field + "[" + earlier + "].name, expected unique names");
            }
        }
    }

    /** A name of 1..maxNameLength characters matching {@link #NAME}. */
    static void requireName(String field, String name, Limits limits) {
        if (name == null || name.isEmpty() || name.length() > limits.maxNameLength() || !NAME.matcher(name).matches()) {
            throw new InputException(field, "got " + (name == null ? "nothing" : "\"" + truncate(name) + "\"")
                    + ", expected 1-" + limits.maxNameLength() + " characters: a letter, then letters, digits, _ - .");
        }
    }

    private static void requireLength(String field, String text, int max) {
        if (text != null && text.length() > max) {
            throw new InputException(field, "got " + text.length() + " characters, expected at most " + max);
        }
    }

    private static String truncate(String s) {
        return s.length() > 40 ? s.substring(0, 40) + "…" : s;
    }

    /**
     * Each matrix given is as large as the named quantities say (a: states × states, b: states ×
     * inputs, c: outputs × states, d: outputs × inputs), so the refusal names the matrix at fault,
     * not a later one measured against it. Missing matrices and rows are the engine's to refuse.
     */
    private void requireShapes() {
        int n = states.size();
        int p = outputs.size();
        int m = inputsOrEmpty().size();
        requireShape("a", a, n, "state", n, "state");
        requireShape("b", b, n, "state", m, "input");
        requireShape("c", c, p, "output", n, "state");
        requireShape("d", d, p, "output", m, "input");
    }

    private static void requireShape(String field, double[][] matrix, int rows, String rowOf, int cols, String colOf) {
        if (matrix == null || matrix.length == 0) {
            return;
        }
        if (matrix.length != rows) {
            throw new ModelException(field, "got " + Counted.of(matrix.length, "row") + ", expected " + rows
                    + " (one per named " + rowOf + ")");
        }
        for (int i = 0; i < rows; i++) {
            if (matrix[i] != null && matrix[i].length != cols) {
                throw new ModelException(field + "[" + i + "]", "got " + Counted.of(matrix[i].length, "column")
                        + ", expected " + cols + " (one per named " + colOf + ")");
            }
        }
    }

    private static void requireCount(String field, List<Quantity> list, int expected, String what) {
        int got = list == null ? 0 : list.size();
        if (got != expected) {
            throw new ModelException(field, "got " + Counted.of(got, "name") + ", expected " + expected + " (the " + what + ")");
        }
    }
}
