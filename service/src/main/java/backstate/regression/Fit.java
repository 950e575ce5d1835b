package backstate.regression;

import backstate.estimation.Estimate;
import backstate.formats.DocumentSolver;
import backstate.formats.EstimateDocument;
import backstate.formats.ModelDocument;
import backstate.formats.Quantity;
import java.util.List;

/**
 * What one model version made of one trace: the fit's numbers when it solved, the reason when it
 * did not. Arrays are in the version's own state and output order, named by {@code states} and
 * {@code outputs}.
 */
record Fit(Status status, String message, double chiSquare, int degreesOfFreedom, List<String> states,
           double[] x0, double[] standardErrors, List<String> outputs, double[] rms, List<String> flags) {

    enum Status {
        /** Solved with at least one degree of freedom: χ²/dof is defined. */
        SOLVED,
        /** The trace does not determine x0 under this version. */
        UNOBSERVABLE,
        /** The trace (its stored options, e.g. a prior of another size) does not fit this version. */
        INVALID,
        /** The trace's stored payload is damaged: neither version could read it. */
        UNREADABLE
    }

    static Fit of(DocumentSolver.Outcome outcome, ModelDocument model) {
        if (outcome instanceof DocumentSolver.Outcome.NotObservable u) {
            return notSolved(Status.UNOBSERVABLE, u.message());
        }
        Estimate e = ((DocumentSolver.Outcome.Solved) outcome).estimate();
        List<String> outputs = model.outputs().stream().map(Quantity::name).toList();
        if (e.degreesOfFreedom() < 1) {
            return notSolved(Status.INVALID, "no degrees of freedom left to judge the fit (" + e.degreesOfFreedom()
                    + "): the trace has no more equations than unknowns");
        }
        int n = model.states().size();
        double[] rms = new double[outputs.size()];
        for (int j = 0; j < rms.length; j++) {
            rms[j] = e.channels().get(j).rms();
        }
        return new Fit(Status.SOLVED, null, e.chiSquare(), e.degreesOfFreedom(),
                model.states().stream().map(Quantity::name).toList(), e.initialState(n),
                java.util.Arrays.copyOf(e.standardErrors(), n), outputs, rms, EstimateDocument.flagNames(e));
    }

    static Fit notSolved(Status status, String message) {
        return new Fit(status, message, Double.NaN, 0, List.of(), new double[0], new double[0], List.of(),
                new double[0], List.of());
    }

    boolean solved() {
        return status == Status.SOLVED;
    }

    double chi2PerDof() {
        return chiSquare / degreesOfFreedom;
    }

    /** The RMS residual of the named output, NaN if this fit has no such output. */
    double rms(String output) {
        int j = outputs.indexOf(output);
        return j < 0 ? Double.NaN : rms[j];
    }
}
