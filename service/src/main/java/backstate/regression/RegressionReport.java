package backstate.regression;

import backstate.formats.EstimateDocument;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import org.apache.commons.math3.stat.descriptive.rank.Percentile;

/**
 * Collects a run's trace comparisons and judges them: per unit a pooled Δχ²/dof and the reasons
 * it is worse beyond tolerance, fleet aggregates, and the verdict.
 */
public final class RegressionReport {
    /** The verdict's rule when the share of worse units decided it. */
    public static final String RULE_WORSE_SHARE = "worse-share";
    /** The verdict's rule when the baseline solved no selected trace, so nothing could be judged. */
    public static final String RULE_NO_COMPARABLE_UNITS = "no-comparable-units";

    /** A unit's change: Δχ²/dof below, above or exactly at 0 (or worse: a trace lost). */
    static final String BETTER = "better";
    static final String WORSE = "worse";
    static final String UNCHANGED = "unchanged";

    /**
     * Relative size of a Δχ²/dof that is rounding, not a change: each χ² is a sum of up to millions
     * of terms (N·2⁻⁵³ ≈ 1e-10 relative at N = 10⁶), and two orderings of one model's states differ
     * by about 1e-15 (common practice, no source). A Δ within it is {@code unchanged} and never
     * beyond a tolerance.
     */
    static final double ROUNDING = 1e-9;
    /** The same for an x̂0 shift, in standard errors: one model's two orderings move x̂0 by about 1e-11 of them. */
    static final double SHIFT_ROUNDING = 1e-9;
    private static final double MEDIAN = 50.0;
    private static final double P95 = 95.0;

    private final String family;
    private final RegressionResult.VersionInfo baseline;
    private final RegressionResult.VersionInfo candidate;
    private final Tolerances tolerances;
    private final int tracesTotal;
    private final boolean statesComparable;
    private final Map<String, List<TraceComparison>> byUnit = new LinkedHashMap<>();
    private int tracesDone;

    /**
     * @param tolerances resolved tolerances ({@link Tolerances#resolve})
     */
    public RegressionReport(String family, RegressionResult.VersionInfo baseline,
                            RegressionResult.VersionInfo candidate, Tolerances tolerances, int tracesTotal) {
        this.family = family;
        this.baseline = baseline;
        this.candidate = candidate;
        this.tolerances = tolerances;
        this.tracesTotal = tracesTotal;
        this.statesComparable = statesComparable(baseline.states(), candidate.states());
    }

    /** Same count and the same names, in any order: x̂0 can then be compared state by state. */
    public static boolean statesComparable(List<String> baseline, List<String> candidate) {
        return baseline.size() == candidate.size() && baseline.containsAll(candidate);
    }

    void add(String unitId, String traceId, String windowStart, String receivedAt, int storedVersion, Fit b, Fit c) {
        add(new TraceComparison(unitId, traceId, windowStart, receivedAt, storedVersion, b, c, statesComparable));
    }

    /**
     * Adds a comparison made elsewhere (a chunk of this run, under the same versions). Adding a
     * run's comparisons in run order gives the report that comparing its traces here would.
     */
    void add(TraceComparison comparison) {
        byUnit.computeIfAbsent(comparison.unitId(), u -> new ArrayList<>()).add(comparison);
        tracesDone++;
    }

    /** Every comparison so far, unit by unit in the order the units first came, each unit's in the order added. */
    List<TraceComparison> comparisons() {
        return byUnit.values().stream().flatMap(List::stream).toList();
    }

    int tracesDone() {
        return tracesDone;
    }

    /** The result so far; {@code complete} false (a cancelled run) leaves the verdict out. */
    public RegressionResult build(boolean complete) {
        List<RegressionResult.UnitResult> units = new ArrayList<>();
        List<RegressionResult.Finding> findings = new ArrayList<>();
        List<Double> deltas = new ArrayList<>();
        int compared = 0;
        int better = 0;
        int worse = 0;
        int unchanged = 0;
        for (Map.Entry<String, List<TraceComparison>> e : byUnit.entrySet()) {
            RegressionResult.UnitResult unit = judge(e.getKey(), e.getValue());
            units.add(unit);
            if (!unit.compared()) {
                continue;
            }
            compared++;
            switch (unit.change()) {
                case BETTER -> better++;
                case WORSE -> worse++;
                default -> unchanged++;
            }
            if (unit.deltaChi2PerDof() != null) {
                deltas.add(unit.deltaChi2PerDof());
            }
            if (unit.beyondTolerance()) {
                findings.add(new RegressionResult.Finding(unit.unitId(), unit.deltaChi2PerDof(),
                        unit.maxAbsX0ShiftSe(), unit.reasons()));
            }
        }
        double[] sorted = deltas.stream().mapToDouble(Double::doubleValue).sorted().toArray();
        RegressionResult.Summary summary = new RegressionResult.Summary(units.size(), compared,
                units.size() - compared, better, worse, unchanged, findings.size(), quantile(sorted, MEDIAN),
                quantile(sorted, P95));
        return new RegressionResult(family, baseline, candidate, statesComparable, statesNote(), tolerances,
                complete, tracesTotal, tracesDone, summary, findings, complete ? verdict(compared, findings.size()) : null,
                units);
    }

    private RegressionResult.UnitResult judge(String unitId, List<TraceComparison> traces) {
        double chi2B = 0.0;
        double chi2C = 0.0;
        long dofB = 0;
        long dofC = 0;
        double maxShift = Double.NaN;
        List<String> reasons = new ArrayList<>();
        boolean compared = false;
        for (TraceComparison t : traces) {
            compared |= t.baseline().solved();
            if (t.candidateLost()) {
                reasons.add("the candidate did not solve trace " + t.traceId() + " (" + t.candidate().message() + ")");
            }
            if (t.bothSolved()) {
                chi2B += t.baseline().chiSquare();
                chi2C += t.candidate().chiSquare();
                dofB += t.baseline().degreesOfFreedom();
                dofC += t.candidate().degreesOfFreedom();
                double s = t.maxAbsShiftSe();
                if (!Double.isNaN(s) && (Double.isNaN(maxShift) || s > maxShift)) {
                    maxShift = s;
                }
            }
        }
        List<RegressionResult.TraceResult> results = traces.stream().map(TraceComparison::toResult).toList();
        if (!compared) {
            return new RegressionResult.UnitResult(unitId, false, null, null, null, null, null, false,
                    notComparedReasons(traces), results);
        }
        Double perDofB = dofB > 0 ? EstimateDocument.num(chi2B / dofB) : null;
        Double perDofC = dofC > 0 ? EstimateDocument.num(chi2C / dofC) : null;
        Double delta = dofB > 0 ? EstimateDocument.num(chi2C / dofC - chi2B / dofB) : null;
        double rounding = delta == null ? 0.0 : ROUNDING * Math.max(Math.abs(perDofB), Math.abs(perDofC == null ? 0.0 : perDofC));
        if (delta != null && delta > tolerances.maxChi2PerDofIncrease() + rounding) {
            reasons.add("χ²/dof rose by " + sixDigits(delta) + ", more than maxChi2PerDofIncrease "
                    + tolerances.maxChi2PerDofIncrease());
        }
        if (tolerances.maxX0ShiftSe() != null && !Double.isNaN(maxShift)
                && maxShift > tolerances.maxX0ShiftSe() + SHIFT_ROUNDING) {
            reasons.add(String.format(Locale.ROOT, "x̂0 moved by %.3f standard errors, more than maxX0ShiftSe %s",
                    maxShift, tolerances.maxX0ShiftSe()));
        }
        boolean lost = traces.stream().anyMatch(TraceComparison::candidateLost);
        String change = lost || (delta != null && delta > rounding) ? WORSE : delta != null && delta < -rounding ? BETTER
                : UNCHANGED;
        return new RegressionResult.UnitResult(unitId, true, change, perDofB, perDofC, delta,
                EstimateDocument.num(maxShift), !reasons.isEmpty(), reasons, results);
    }

    /** Why a unit is not compared: each damaged trace by ID, else that the baseline solved none. */
    private static List<String> notComparedReasons(List<TraceComparison> traces) {
        List<String> reasons = traces.stream().filter(t -> t.baseline().status() == Fit.Status.UNREADABLE)
                .map(t -> "trace " + t.traceId() + " could not be read: its stored payload is damaged").toList();
        return reasons.isEmpty() ? List.of("the baseline solved none of this unit's traces") : reasons;
    }

    private RegressionResult.Verdict verdict(int compared, int beyond) {
        if (compared == 0) {
            return new RegressionResult.Verdict(false, RULE_NO_COMPARABLE_UNITS,
                    "the baseline solved none of the selected traces, so no unit could be compared");
        }
        double share = (double) beyond / compared;
        boolean pass = share <= tolerances.maxWorseShare();
        String detail = String.format(Locale.ROOT, "%d of %d compared units are worse beyond tolerance (share %.4f %s"
                + " maxWorseShare %s)", beyond, compared, share, pass ? "<=" : ">", tolerances.maxWorseShare());
        return new RegressionResult.Verdict(pass, RULE_WORSE_SHARE, detail);
    }

    private String statesNote() {
        return statesComparable ? null : "the versions' states differ (baseline " + baseline.states() + ", candidate "
                + candidate.states() + "): x̂0 shifts are not comparable and not judged";
    }

    /** Hyndman and Fan (1996) definition 7, linear interpolation; null for no values. */
    private static Double quantile(double[] sorted, double p) {
        if (sorted.length == 0) {
            return null;
        }
        return EstimateDocument.num(new Percentile().withEstimationType(Percentile.EstimationType.R_7)
                .evaluate(sorted, p));
    }

    /**
     * Six significant digits, plain below 10⁹ and as a power of ten above it: a candidate that
     * does not fit at all can raise χ²/dof by 10²⁸, which fixed decimals would print in 33 digits.
     */
    static String sixDigits(double value) {
        java.math.BigDecimal d = new java.math.BigDecimal(value).round(new java.math.MathContext(6)).stripTrailingZeros();
        return Math.abs(value) < 1e9 ? d.toPlainString() : d.toString();
    }
}
