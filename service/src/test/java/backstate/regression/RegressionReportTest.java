package backstate.regression;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * The report's judging on hand-made fits, with the expected numbers worked out by hand in the
 * comments: pooling per unit, lost traces, units the baseline cannot solve, the x̂0 shift score,
 * the share rule at its boundary, and definition-7 quantiles.
 */
class RegressionReportTest {
    static final List<String> STATES = List.of("a", "b");
    static final List<String> OUTPUTS = List.of("y");
    static final RegressionResult.VersionInfo V1 = new RegressionResult.VersionInfo(1, "active", STATES, OUTPUTS);
    static final RegressionResult.VersionInfo V2 = new RegressionResult.VersionInfo(2, "retired", STATES, OUTPUTS);
    static final double EXACT = 1e-12;

    static Fit fit(double chi2, int dof, double[] x0, double[] se) {
        return new Fit(Fit.Status.SOLVED, null, chi2, dof, STATES, x0, se, OUTPUTS, new double[] {Math.sqrt(chi2 / dof)},
                List.of());
    }

    static Fit fit(double chi2, int dof) {
        return fit(chi2, dof, new double[] {10, 20}, new double[] {0.375, 0.5});
    }

    static RegressionReport report(Double maxChi2, Double maxShare, Double maxShift, int traces) {
        return new RegressionReport("f", V1, V2, Tolerances.resolve(new Tolerances(maxChi2, maxShare, maxShift)), traces);
    }

    @Test
    void a_unit_pools_chi_square_over_its_traces_rather_than_averaging_their_ratios() {
        RegressionReport r = report(1.0, 0.0, null, 2);
        r.add("U", "t1", "2025-12-31T00:00:00Z", "2026-01-01T00:00:00Z", 1, fit(100, 100), fit(150, 100));
        r.add("U", "t2", "2025-12-31T00:00:00Z", "2026-01-02T00:00:00Z", 1, fit(30, 10), fit(20, 10));
        RegressionResult.UnitResult unit = r.build(true).units().get(0);
        // Baseline (100 + 30) / 110 = 1.181818…, candidate (150 + 20) / 110 = 1.545454…, Δ = 40/110.
        // (The mean of the per-trace Δ would be (0.5 − 1.0) / 2 = −0.25: "better", wrongly.)
        assertEquals(130.0 / 110, unit.baselineChi2PerDof(), EXACT);
        assertEquals(170.0 / 110, unit.candidateChi2PerDof(), EXACT);
        assertEquals(40.0 / 110, unit.deltaChi2PerDof(), EXACT);
        assertEquals("worse", unit.change());
        assertFalse(unit.beyondTolerance(), "0.364 is within the tolerance of 1.0");
    }

    @Test
    void a_trace_the_candidate_cannot_solve_makes_its_unit_worse_beyond_tolerance() {
        RegressionReport r = report(null, null, null, 1);
        r.add("U", "t1", "2025-12-31T00:00:00Z", "2026-01-01T00:00:00Z", 1, fit(100, 100), Fit.notSolved(Fit.Status.UNOBSERVABLE, "unobservable: …"));
        RegressionResult result = r.build(true);
        RegressionResult.UnitResult unit = result.units().get(0);
        assertTrue(unit.beyondTolerance());
        assertEquals("worse", unit.change());
        assertNull(unit.deltaChi2PerDof());
        assertEquals(List.of("the candidate did not solve trace t1 (unobservable: …)"), unit.reasons());
        assertEquals("the candidate did not solve this trace", unit.traces().get(0).x0().reason());
        assertEquals("unobservable", unit.traces().get(0).candidate().status());
        assertFalse(result.verdict().pass());
        assertNull(result.summary().medianDeltaChi2PerDof(), "no unit has a Δ to take quantiles of");
    }

    @Test
    void units_the_baseline_cannot_solve_are_not_compared_and_alone_decide_no_verdict_but_fail() {
        RegressionReport r = report(null, null, null, 1);
        r.add("U", "t1", "2025-12-31T00:00:00Z", "2026-01-01T00:00:00Z", 1, Fit.notSolved(Fit.Status.INVALID, "prior of size 3"), fit(1, 1));
        RegressionResult result = r.build(true);
        assertFalse(result.units().get(0).compared());
        assertEquals(1, result.summary().notCompared());
        assertEquals(0, result.summary().compared());
        assertEquals(new RegressionResult.Verdict(false, RegressionReport.RULE_NO_COMPARABLE_UNITS,
                "the baseline solved none of the selected traces, so no unit could be compared"), result.verdict());
    }

    @Test
    void the_x0_shift_is_the_difference_over_the_combined_standard_error_and_judged_only_when_asked() {
        // State a: (11.25 − 10) / √(0.375² + 0.5²) = 1.25 / 0.625 = 2 (all exact in binary);
        // state b: (19 − 20) / √(0.5² + 0.5²) = −√2 = −1.41421.
        Fit candidate = fit(100, 100, new double[] {11.25, 19}, new double[] {0.5, 0.5});
        RegressionReport judged = report(null, null, 1.5, 1);
        judged.add("U", "t1", "2025-12-31T00:00:00Z", "2026-01-01T00:00:00Z", 1, fit(100, 100), candidate);
        RegressionResult.UnitResult unit = judged.build(true).units().get(0);
        assertEquals(2.0, unit.maxAbsX0ShiftSe(), EXACT);
        List<RegressionResult.StateShift> states = unit.traces().get(0).x0().states();
        assertEquals(2.0, states.get(0).shiftSe(), EXACT);
        assertEquals(-Math.sqrt(2.0), states.get(1).shiftSe(), EXACT);
        assertEquals("unchanged", unit.change());
        assertEquals(List.of("x̂0 moved by 2.000 standard errors, more than maxX0ShiftSe 1.5"), unit.reasons());

        RegressionReport atLimit = report(null, null, 2.0, 1);
        atLimit.add("U", "t1", "2025-12-31T00:00:00Z", "2026-01-01T00:00:00Z", 1, fit(100, 100), candidate);
        assertFalse(atLimit.build(true).units().get(0).beyondTolerance(), "2.0 is not more than 2.0");

        RegressionReport reportOnly = report(null, null, null, 1);
        reportOnly.add("U", "t1", "2025-12-31T00:00:00Z", "2026-01-01T00:00:00Z", 1, fit(100, 100), candidate);
        assertFalse(reportOnly.build(true).units().get(0).beyondTolerance());
    }

    @Test
    void the_share_rule_passes_at_its_limit_and_fails_above_it() {
        // 1 unit of 20 worse beyond tolerance: share 0.05.
        RegressionReport r = report(0.1, 0.05, null, 20);
        for (int i = 0; i < 20; i++) {
            r.add("U" + i, "t" + i, "2025-12-31T00:00:00Z", "2026-01-01T00:00:00Z", 1, fit(100, 100), i == 0 ? fit(200, 100) : fit(100, 100));
        }
        RegressionResult.Verdict verdict = r.build(true).verdict();
        assertTrue(verdict.pass());
        assertEquals("1 of 20 compared units are worse beyond tolerance (share 0.0500 <= maxWorseShare 0.05)",
                verdict.detail());

        RegressionReport strict = report(0.1, 0.0, null, 20);
        for (int i = 0; i < 20; i++) {
            strict.add("U" + i, "t" + i, "2025-12-31T00:00:00Z", "2026-01-01T00:00:00Z", 1, fit(100, 100), i == 0 ? fit(200, 100) : fit(100, 100));
        }
        assertFalse(strict.build(true).verdict().pass());
    }

    @Test
    void fleet_quantiles_interpolate_between_order_statistics() {
        // Δ = 1, 2, 3, 4 (dof 100). Definition 7: median h = 1.5 → 2.5; p95 h = 3 × 0.95 = 2.85 → 3 + 0.85 × 1 = 3.85.
        RegressionReport r = report(10.0, 0.0, null, 4);
        for (int i = 1; i <= 4; i++) {
            r.add("U" + i, "t" + i, "2025-12-31T00:00:00Z", "2026-01-01T00:00:00Z", 1, fit(100, 100), fit(100 + 100 * i, 100));
        }
        RegressionResult.Summary s = r.build(true).summary();
        assertEquals(2.5, s.medianDeltaChi2PerDof(), EXACT);
        assertEquals(3.85, s.p95DeltaChi2PerDof(), EXACT);
        assertEquals(4, s.worse());
        assertEquals(0, s.worseBeyondTolerance());
    }

    @Test
    void a_delta_of_rounding_is_unchanged_and_within_a_zero_tolerance() {
        // One model with its states listed in another order gives χ² equal to about 1e-15 relative.
        RegressionReport r = report(0.0, 0.0, 0.0, 3);
        r.add("U", "t1", "2025-12-31T00:00:00Z", "2026-01-01T00:00:00Z", 1, fit(100, 100), fit(100 * (1 + 3e-15), 100));
        r.add("V", "t2", "2025-12-31T00:00:00Z", "2026-01-01T00:00:00Z", 1, fit(100, 100), fit(100 * (1 - 3e-15), 100));
        r.add("W", "t3", "2025-12-31T00:00:00Z", "2026-01-01T00:00:00Z", 1, fit(100, 100), fit(100 * (1 + 1e-8), 100));
        RegressionResult result = r.build(true);
        assertEquals(List.of("unchanged", "unchanged", "worse"), result.units().stream().map(RegressionResult.UnitResult::change)
                .toList());
        assertEquals(List.of(false, false, true), result.units().stream().map(RegressionResult.UnitResult::beyondTolerance)
                .toList());
    }

    @Test
    void an_incomplete_report_has_no_verdict() {
        RegressionReport r = report(null, null, null, 3);
        r.add("U", "t1", "2025-12-31T00:00:00Z", "2026-01-01T00:00:00Z", 1, fit(100, 100), fit(100, 100));
        RegressionResult partial = r.build(false);
        assertFalse(partial.complete());
        assertEquals(1, partial.tracesDone());
        assertEquals(3, partial.tracesTotal());
        assertNull(partial.verdict());
    }

    /** A candidate that does not fit at all raises χ²/dof by orders of magnitude: printed in six digits, not 33. */
    @org.junit.jupiter.api.Test
    void a_rise_is_printed_in_six_significant_digits_whatever_its_size() {
        assertEquals("43.0028", RegressionReport.sixDigits(43.00281234));
        assertEquals("0.5", RegressionReport.sixDigits(0.5));
        assertEquals("1.30137E+28", RegressionReport.sixDigits(1.3013660068469653e28));
        assertEquals("999999", RegressionReport.sixDigits(999999.4));
    }
}
