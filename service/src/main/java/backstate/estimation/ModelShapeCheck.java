package backstate.estimation;

import backstate.text.Counted;

/** Validates the shapes and finiteness of state-space matrices, naming the offending entry. */
final class ModelShapeCheck {
    private final int states;
    private final int outputs;
    private final int inputs;

    ModelShapeCheck(double[][] a, double[][] b, double[][] c, double[][] d,
                    int maxStates, int maxOutputs, int maxInputs) {
        if (a == null || a.length == 0) {
            throw new ModelException("a", "got no rows, expected a square matrix with at least one state");
        }
        states = a.length;
        requireAtMost("a", states, maxStates, "states");
        requireMatrix("a", a, states, states);
        if (c == null || c.length == 0) {
            throw new ModelException("c", "got no rows, expected at least one output");
        }
        outputs = c.length;
        requireAtMost("c", outputs, maxOutputs, "outputs");
        requireMatrix("c", c, outputs, states);
        if (b != null && b.length > 0 && b[0] == null) {
            throw new ModelException("b[0]", "got null, expected a row of numbers");
        }
        inputs = b == null || b.length == 0 ? 0 : b[0].length;
        requireAtMost("b", inputs, maxInputs, "inputs");
        if (inputs > 0) {
            requireMatrix("b", b, states, inputs);
            if (d != null) {
                requireMatrix("d", d, outputs, inputs);
            }
        } else if (d != null && d.length > 0 && d[0].length > 0) {
            throw new ModelException("d", "got " + Counted.of(d[0].length, "column") + ", expected none because b has no inputs");
        }
    }

    int states() {
        return states;
    }

    int outputs() {
        return outputs;
    }

    int inputs() {
        return inputs;
    }

    void requireNoiseSigma(String field, double[] sigma) {
        if (sigma == null) {
            return;
        }
        if (sigma.length != outputs) {
            throw new ModelException(field, "got " + Counted.of(sigma.length, "value") + ", expected " + outputs
                    + " (one per output)");
        }
        for (int j = 0; j < sigma.length; j++) {
            if (!(sigma[j] > 0.0) || !Double.isFinite(sigma[j])) {
                throw new ModelException(field + "[" + j + "]", "got " + sigma[j] + ", expected a finite number > 0");
            }
        }
    }

    private static void requireAtMost(String field, int got, int max, String what) {
        if (got > max) {
            throw new ModelException(field, "got " + got + " " + what + ", expected at most " + max);
        }
    }

    private static void requireMatrix(String field, double[][] m, int rows, int cols) {
        if (m.length != rows) {
            throw new ModelException(field, "got " + Counted.of(m.length, "row") + ", expected " + rows);
        }
        for (int i = 0; i < rows; i++) {
            if (m[i] == null || m[i].length != cols) {
                int got = m[i] == null ? 0 : m[i].length;
                throw new ModelException(field + "[" + i + "]", "got " + Counted.of(got, "column") + ", expected " + cols);
            }
            for (int j = 0; j < cols; j++) {
                if (!Double.isFinite(m[i][j])) {
                    throw new ModelException(field + "[" + i + "][" + j + "]", "got " + m[i][j] + ", expected a finite number");
                }
            }
        }
    }
}
