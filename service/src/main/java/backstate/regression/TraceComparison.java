package backstate.regression;

import backstate.formats.EstimateDocument;
import java.util.ArrayList;
import java.util.List;

/**
 * One trace solved under both versions, compared: Δχ²/dof, RMS per channel, flags gained and
 * lost, and the x̂0 shift per state in combined standard errors.
 */
record TraceComparison(String unitId, String traceId, String windowStart, String receivedAt, int storedVersion,
                       Fit baseline, Fit candidate, boolean statesComparable) {

    /** Both versions solved it: it counts in the unit's pooled χ²/dof. */
    boolean bothSolved() {
        return baseline.solved() && candidate.solved();
    }

    /** The baseline solved it and the candidate did not: the candidate lost this trace. */
    boolean candidateLost() {
        return baseline.solved() && !candidate.solved();
    }

    /** The largest |shift| over the states, NaN when not comparable or when no shift is defined. */
    double maxAbsShiftSe() {
        double max = Double.NaN;
        if (bothSolved() && statesComparable) {
            for (int i = 0; i < baseline.states().size(); i++) {
                double s = Math.abs(shiftSe(i));
                if (!Double.isNaN(s) && (Double.isNaN(max) || s > max)) {
                    max = s;
                }
            }
        }
        return max;
    }

    RegressionResult.TraceResult toResult() {
        if (!bothSolved()) {
            return new RegressionResult.TraceResult(traceId, windowStart, receivedAt, storedVersion, summary(baseline),
                    summary(candidate), null, List.of(), null, null,
                    new RegressionResult.X0Comparison(false, notBothSolved(), null, null));
        }
        return new RegressionResult.TraceResult(traceId, windowStart, receivedAt, storedVersion, summary(baseline),
                summary(candidate), EstimateDocument.num(candidate.chi2PerDof() - baseline.chi2PerDof()), channels(),
                minus(candidate.flags(), baseline.flags()), minus(baseline.flags(), candidate.flags()), x0());
    }

    /** (candidate − baseline) / √(se_b² + se_c²) for the baseline's state i, paired by name. */
    private double shiftSe(int i) {
        int k = candidate.states().indexOf(baseline.states().get(i));
        double spread = Math.hypot(baseline.standardErrors()[i], candidate.standardErrors()[k]);
        double diff = candidate.x0()[k] - baseline.x0()[i];
        return spread > 0.0 ? diff / spread : Double.NaN;
    }

    private RegressionResult.X0Comparison x0() {
        if (!statesComparable) {
            return new RegressionResult.X0Comparison(false, "the versions' states differ: baseline "
                    + baseline.states() + ", candidate " + candidate.states(), null, null);
        }
        List<RegressionResult.StateShift> states = new ArrayList<>();
        for (int i = 0; i < baseline.states().size(); i++) {
            int k = candidate.states().indexOf(baseline.states().get(i));
            states.add(new RegressionResult.StateShift(baseline.states().get(i), EstimateDocument.num(baseline.x0()[i]),
                    EstimateDocument.num(candidate.x0()[k]), EstimateDocument.num(baseline.standardErrors()[i]),
                    EstimateDocument.num(candidate.standardErrors()[k]), EstimateDocument.num(shiftSe(i))));
        }
        return new RegressionResult.X0Comparison(true, null, EstimateDocument.num(maxAbsShiftSe()), states);
    }

    private List<RegressionResult.ChannelChange> channels() {
        List<RegressionResult.ChannelChange> channels = new ArrayList<>();
        for (String output : baseline.outputs()) {
            double b = baseline.rms(output);
            double c = candidate.rms(output);
            channels.add(new RegressionResult.ChannelChange(output, EstimateDocument.num(b), EstimateDocument.num(c),
                    EstimateDocument.num(c - b)));
        }
        return channels;
    }

    private String notBothSolved() {
        return (baseline.solved() ? "the candidate" : candidate.solved() ? "the baseline" : "neither version")
                + " did not solve this trace";
    }

    private static RegressionResult.FitSummary summary(Fit f) {
        if (!f.solved()) {
            return new RegressionResult.FitSummary(f.status().name().toLowerCase(java.util.Locale.ROOT), f.message(),
                    null, null, null, null);
        }
        return new RegressionResult.FitSummary("solved", null, EstimateDocument.num(f.chiSquare()),
                f.degreesOfFreedom(), EstimateDocument.num(f.chi2PerDof()), f.flags());
    }

    private static List<String> minus(List<String> a, List<String> b) {
        return a.stream().filter(x -> !b.contains(x)).toList();
    }
}
