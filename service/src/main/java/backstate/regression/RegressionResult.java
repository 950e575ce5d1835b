package backstate.regression;

import com.fasterxml.jackson.annotation.JsonInclude;
import java.util.List;

/**
 * The published result of a regression run (jobs.result_json): per unit and per trace what
 * changed from baseline to candidate, fleet aggregates, the units worse beyond tolerance, and the
 * verdict. Numbers that are not finite, and fields that do not apply, are left out.
 *
 * @param complete false when the run was cancelled: the units so far, and no verdict
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record RegressionResult(String family, VersionInfo baseline, VersionInfo candidate, boolean statesComparable,
                               String statesNote, Tolerances tolerances, boolean complete, int tracesTotal,
                               int tracesDone, Summary summary, List<Finding> worseBeyondTolerance, Verdict verdict,
                               List<UnitResult> units) {

    /**
     * A compared version: its number, status (a retired version may be compared), states and outputs,
     * and the formulation its fits use: {@code process_noise} for a version that declares process
     * noise (every trace is solved so, whatever it was posted with), else null (each trace's own).
     */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    public record VersionInfo(int version, String status, List<String> states, List<String> outputs,
                              String formulation) {
        /** A version whose fits use each trace's own formulation. */
        public VersionInfo(int version, String status, List<String> states, List<String> outputs) {
            this(version, status, states, outputs, null);
        }
    }

    /**
     * Fleet aggregates over compared units (those the baseline solved at least once). Quantiles of
     * Δχ²/dof interpolate linearly between order statistics (Hyndman and Fan 1996, definition 7).
     */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    public record Summary(int units, int compared, int notCompared, int better, int worse, int unchanged,
                          int worseBeyondTolerance, Double medianDeltaChi2PerDof, Double p95DeltaChi2PerDof) {
    }

    /** A unit worse beyond tolerance, and every reason why. */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    public record Finding(String unitId, Double deltaChi2PerDof, Double maxAbsX0ShiftSe, List<String> reasons) {
    }

    /**
     * Pass or fail, the rule that decided it ("worse-share" or "no-comparable-units"), and the
     * numbers it compared.
     */
    public record Verdict(boolean pass, String rule, String detail) {
    }

    /**
     * One unit: χ²/dof pooled over its traces that both versions solved (Σχ² / Σdof per version),
     * the largest x̂0 shift, and whether it is worse beyond tolerance.
     */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    public record UnitResult(String unitId, boolean compared, String change, Double baselineChi2PerDof,
                             Double candidateChi2PerDof, Double deltaChi2PerDof, Double maxAbsX0ShiftSe,
                             boolean beyondTolerance, List<String> reasons, List<TraceResult> traces) {
    }

    /** One trace under both versions; windowStart is when it was recorded (its first sample), RFC 3339. */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    public record TraceResult(String traceId, String windowStart, String receivedAt, int storedVersion, FitSummary baseline,
                              FitSummary candidate, Double deltaChi2PerDof, List<ChannelChange> channels,
                              List<String> flagsAdded, List<String> flagsRemoved, X0Comparison x0) {
    }

    /** One version's fit of one trace; {@code message} says why when it is not "solved". */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    public record FitSummary(String status, String message, Double chiSquare, Integer degreesOfFreedom,
                             Double chi2PerDof, List<String> flags) {
    }

    /** RMS residual of one output channel under both versions. */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    public record ChannelChange(String output, Double baselineRms, Double candidateRms, Double deltaRms) {
    }

    /**
     * x̂0 under both versions, state by state, where the state spaces match (same names and count);
     * otherwise {@code comparable} is false and {@code reason} says why.
     */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    public record X0Comparison(boolean comparable, String reason, Double maxAbsShiftSe, List<StateShift> states) {
    }

    /**
     * shiftSe = (candidate − baseline) / √(baselineSe² + candidateSe²). Both estimates come from the
     * same samples, so for similar versions their errors are positively correlated and the true
     * spread of the difference is smaller than this denominator: the score understates a shift.
     */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    public record StateShift(String name, Double baseline, Double candidate, Double baselineSe, Double candidateSe,
                             Double shiftSe) {
    }
}
