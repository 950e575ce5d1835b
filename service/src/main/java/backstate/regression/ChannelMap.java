package backstate.regression;

import backstate.estimation.Trace;
import backstate.formats.InputException;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedTrace;
import backstate.formats.Quantity;
import java.util.List;

/**
 * Puts a stored trace's columns in the order another version of its family expects, matching
 * outputs and inputs by name (a trace is stored in the column order of the version it was posted
 * for). When the orders already agree the trace is returned as it is, so a trace re-solved under
 * the version it was posted for goes through exactly the estimate job's path.
 */
final class ChannelMap {
    private ChannelMap() {
    }

    static ParsedTrace reorder(ParsedTrace stored, ModelDocument storedModel, ModelDocument target) {
        List<String> fromOutputs = names(storedModel.outputs());
        List<String> fromInputs = names(storedModel.inputsOrEmpty());
        List<String> toOutputs = names(target.outputs());
        List<String> toInputs = names(target.inputsOrEmpty());
        if (fromOutputs.equals(toOutputs) && fromInputs.equals(toInputs)) {
            return stored;
        }
        int[] outputAt = positions("outputs", fromOutputs, toOutputs);
        int[] inputAt = positions("inputs", fromInputs, toInputs);
        Trace t = stored.trace();
        int n = t.samples();
        int p = outputAt.length;
        int m = inputAt.length;
        double[] times = new double[n];
        double[] y = new double[n * p];
        double[] u = new double[n * m];
        for (int k = 0; k < n; k++) {
            times[k] = t.time(k);
            for (int j = 0; j < p; j++) {
                y[k * p + j] = t.output(k, outputAt[j]);
            }
            for (int i = 0; i < m; i++) {
                u[k * m + i] = t.input(k, inputAt[i]);
            }
        }
        double[] sigma = new double[p];
        boolean anySigma = false;
        for (int j = 0; j < p; j++) {
            sigma[j] = t.noiseSigma(outputAt[j]);
            anySigma |= !Double.isNaN(sigma[j]);
        }
        return new ParsedTrace(new Trace(times, y, u, p, m, anySigma ? sigma : null), stored.options());
    }

    static List<String> names(List<Quantity> quantities) {
        return quantities.stream().map(Quantity::name).toList();
    }

    private static int[] positions(String field, List<String> from, List<String> to) {
        int[] at = new int[to.size()];
        for (int i = 0; i < at.length; i++) {
            at[i] = from.indexOf(to.get(i));
            if (at[i] < 0) {
                throw new InputException(field, "the stored trace has no column " + to.get(i) + " (it has " + from + ")");
            }
        }
        return at;
    }
}
