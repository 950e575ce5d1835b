package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * The planner on problems with answers in closed form.
 *
 * <p>Double integrator ẋ₁ = x₂, ẋ₂ = 0 with the position measured (y = x₁ + noise σ), samples
 * t_k = kT, k = 0..N−1: G_k = [1, t_k], so W = Σ [1 t_k; t_k t_k²]/σ² with Σk = N(N−1)/2 and
 * Σk² = N(N−1)(2N−1)/6 (sums of powers), and W⁻¹ = σ²·[[2(2N−1)/(N(N+1)), −6/(T·N(N+1))],
 * [−6/(T·N(N+1)), 12/(T²·N(N²−1))]] — the straight-line fit's covariance (e.g. Press et al. 2007,
 * Numerical Recipes §15.2, with uniform abscissae; derived here from the 2×2 inverse).
 */
class SamplingPlannerClosedFormTest {
    /** Φ(T) = [[1, T], [0, 1]] comes out of the matrix exponential to a few eps, and κ(W) ≤ 1e5 here. */
    static final double CLOSED_FORM_TOLERANCE = 1e-11;
    /**
     * Problems in exact arithmetic (integer powers of a rotation, zero blocks of a block-diagonal
     * A): only the final triangular inversion and SVD round, to a few ulp of values ≤ 1.
     */
    static final double EXACT_ARITHMETIC_TOLERANCE = 1e-15;

    static final StateSpaceModel DOUBLE_INTEGRATOR = StateSpaceModel.continuous(
            new double[][] {{0, 1}, {0, 0}}, null, new double[][] {{1, 0}}, null, null);

    @Test
    void double_integrator_information_and_covariance_are_the_sums_of_powers() {
        double sigma = 0.2;
        for (double period : new double[] {0.5, 1.0, 60.0}) {
            double[] horizons = {period, 9 * period, 100 * period};
            SamplingPlanner.SubsetPlan plan = SamplingPlanner.plan(DOUBLE_INTEGRATOR, new SamplingPlanner.Plan(period,
                    horizons, new int[][] {{0}}, new double[] {sigma}, null)).get(0);
            for (SamplingPlanner.Prediction p : plan.predictions()) {
                double n = p.samples();
                assertEquals(Math.round(p.horizon() / period) + 1, p.samples());
                double s1 = n * (n - 1) / 2;
                double s2 = n * (n - 1) * (2 * n - 1) / 6;
                double v = sigma * sigma;
                double[] w = {n / v, period * s1 / v, period * s1 / v, period * period * s2 / v};
                assertClose(w, p.information(), "W at N = " + n + ", T = " + period);
                double[] cov = {v * 2 * (2 * n - 1) / (n * (n + 1)), -v * 6 / (period * n * (n + 1)),
                        -v * 6 / (period * n * (n + 1)), v * 12 / (period * period * n * (n * n - 1))};
                assertClose(cov, p.covariance(), "P at N = " + n + ", T = " + period);
                assertEquals(Math.sqrt(cov[0]), p.standardErrors()[0], CLOSED_FORM_TOLERANCE * Math.sqrt(cov[0]));
                assertEquals(Math.sqrt(cov[3]), p.standardErrors()[1], CLOSED_FORM_TOLERANCE * Math.sqrt(cov[3]));
            }
        }
    }

    @Test
    void one_sample_of_one_output_leaves_a_direction_undetermined() {
        SamplingPlanner.SubsetPlan plan = SamplingPlanner.plan(DOUBLE_INTEGRATOR, new SamplingPlanner.Plan(1.0,
                new double[] {0.5}, new int[][] {{0}}, new double[] {1.0}, null)).get(0);
        SamplingPlanner.Prediction p = plan.predictions().get(0);
        assertEquals(List.of(1L, 1), List.of(p.samples(), p.rank()));
        assertNull(p.standardErrors());
        // G_0 = [1, 0]: the velocity is invisible at t = 0.
        SamplingPlannerReferenceTest.assertSameLine(new double[] {0, 1}, p.unobservableDirections().get(0), "null");
        assertTrue(plan.observable(), "(A, C) itself is observable");
        assertEquals(SamplingPlanner.Verdict.RANK_DEFICIENT_AT_EVERY_HORIZON, plan.verdict());
    }

    @Test
    void shortest_horizon_meeting_a_target_is_the_first_with_enough_samples() {
        // σ = 1, T = 1: se(x₁)² = 2(2N−1)/(N(N+1)) ≤ 0.5² ⇔ N² − 15N + 8 ≥ 0 ⇔ N ≥ 15 (N = 14 gives −6).
        double[] horizons = {10, 13, 14, 20}; // 11, 14, 15 and 21 samples
        SamplingPlanner.SubsetPlan plan = SamplingPlanner.plan(DOUBLE_INTEGRATOR, new SamplingPlanner.Plan(1.0,
                horizons, new int[][] {{0}}, new double[] {1.0}, new double[] {0.5, Double.NaN})).get(0);
        assertEquals(List.of(false, false, true, true),
                plan.predictions().stream().map(SamplingPlanner.Prediction::meetsTargets).toList());
        assertEquals(2, plan.shortestMeetingTargets());
        assertEquals(SamplingPlanner.Verdict.MEETS_TARGETS, plan.verdict());

        SamplingPlanner.SubsetPlan strict = SamplingPlanner.plan(DOUBLE_INTEGRATOR, new SamplingPlanner.Plan(1.0,
                horizons, new int[][] {{0}}, new double[] {1.0}, new double[] {0.01, Double.NaN})).get(0);
        assertEquals(-1, strict.shortestMeetingTargets());
        assertEquals(SamplingPlanner.Verdict.TARGETS_NOT_MET, strict.verdict());
    }

    @Test
    void sampling_a_rotation_at_twice_its_period_aliases_a_mode() {
        // x[k+1] = [[0, 1], [−1, 0]] x[k]: A² = −I exactly, so every second step shows ±x₁ only.
        StateSpaceModel rotation = StateSpaceModel.discrete(new double[][] {{0, 1}, {-1, 0}}, null,
                new double[][] {{1, 0}}, null, 1.0, null);
        SamplingPlanner.SubsetPlan aliased = SamplingPlanner.plan(rotation, new SamplingPlanner.Plan(2.0,
                new double[] {10, 20}, new int[][] {{0}}, new double[] {0.5}, new double[] {1.0, 1.0})).get(0);
        assertTrue(aliased.observable());
        assertEquals(SamplingPlanner.Verdict.RANK_DEFICIENT_AT_EVERY_HORIZON, aliased.verdict());
        for (SamplingPlanner.Prediction p : aliased.predictions()) {
            assertEquals(1, p.rank());
            assertArrayEquals(new double[] {0, 1}, p.unobservableDirections().get(0), 0.0);
            assertFalse(p.meetsTargets());
        }
        // Every step: C A^k cycles [1,0], [0,1], [−1,0], [0,−1], so 4m samples give W = 2m/σ² · I.
        SamplingPlanner.Prediction p = SamplingPlanner.plan(rotation, new SamplingPlanner.Plan(1.0,
                new double[] {11}, new int[][] {{0}}, new double[] {0.5}, null)).get(0).predictions().get(0);
        assertEquals(12, p.samples());
        assertArrayEquals(new double[] {0.25 / 6, 0, 0, 0.25 / 6}, p.covariance(), EXACT_ARITHMETIC_TOLERANCE);
    }

    @Test
    void an_output_that_does_not_see_a_state_makes_it_unobservable_at_every_horizon() {
        StateSpaceModel model = StateSpaceModel.continuous(new double[][] {{-1, 1, 0}, {0.5, -2, 0}, {0, 0, -0.3}},
                null, new double[][] {{1, 0, 0}, {0, 0, 1}}, null, null);
        List<SamplingPlanner.SubsetPlan> plans = SamplingPlanner.plan(model, new SamplingPlanner.Plan(0.5,
                new double[] {5, 50}, new int[][] {{0}, {1, 0}}, new double[] {0.1, 0.1}, new double[] {Double.NaN, 1, 1}));
        SamplingPlanner.SubsetPlan first = plans.get(0);
        assertFalse(first.observable());
        assertEquals(SamplingPlanner.Verdict.UNOBSERVABLE_WITH_THESE_OUTPUTS, first.verdict());
        assertArrayEquals(new double[] {0, 0, 1}, first.unobservableDirections().get(0), EXACT_ARITHMETIC_TOLERANCE);
        for (SamplingPlanner.Prediction p : first.predictions()) {
            assertEquals(2, p.rank());
            assertNull(p.covariance());
            SamplingPlannerReferenceTest.assertSameLine(new double[] {0, 0, 1}, p.unobservableDirections().get(0), "null");
        }
        SamplingPlanner.SubsetPlan both = plans.get(1);
        assertArrayEquals(new int[] {0, 1}, both.outputs(), "reported in model order");
        assertTrue(both.observable());
        assertEquals(3, both.predictions().get(0).rank());
    }

    @Test
    void a_horizon_counts_whole_periods_despite_decimal_rounding() {
        assertEquals(4, SamplingPlanner.samples(0.3, 0.1)); // 0.3 / 0.1 = 2.9999999999999996
        assertEquals(3, SamplingPlanner.samples(0.25, 0.1));
        assertEquals(361, SamplingPlanner.samples(21600, 60));
        assertEquals(1, SamplingPlanner.samples(0, 60));
    }

    @Test
    void a_plan_that_does_not_fit_the_model_names_the_field() {
        double[] sigma = {1.0};
        int[][] one = {{0}};
        assertField("samplePeriod", () -> plan(new SamplingPlanner.Plan(0, new double[] {1}, one, sigma, null)));
        assertField("horizons", () -> plan(new SamplingPlanner.Plan(1, new double[0], one, sigma, null)));
        assertField("horizons[1]", () -> plan(new SamplingPlanner.Plan(1, new double[] {5, 5}, one, sigma, null)));
        assertField("horizons[0]", () -> plan(new SamplingPlanner.Plan(1, new double[] {Double.NaN}, one, sigma, null)));
        assertField("outputSubsets", () -> plan(new SamplingPlanner.Plan(1, new double[] {1}, new int[0][], sigma, null)));
        assertField("outputSubsets[0][0]", () -> plan(new SamplingPlanner.Plan(1, new double[] {1}, new int[][] {{1}}, sigma, null)));
        assertField("outputSubsets[0][1]", () -> plan(new SamplingPlanner.Plan(1, new double[] {1}, new int[][] {{0, 0}}, sigma, null)));
        assertField("noiseSigma[0]", () -> plan(new SamplingPlanner.Plan(1, new double[] {1}, one, new double[] {-1}, null)));
        assertField("noiseSigma", () -> plan(new SamplingPlanner.Plan(1, new double[] {1}, one, new double[2], null)));
        assertField("targetStdErrors[1]", () -> plan(new SamplingPlanner.Plan(1, new double[] {1}, one, sigma, new double[] {1, 0})));
        assertField("horizons", () -> plan(new SamplingPlanner.Plan(1, new double[] {SamplingPlanner.MAX_EQUATIONS}, one, sigma, null)));
        StateSpaceModel discrete = StateSpaceModel.discrete(new double[][] {{1}}, null, new double[][] {{1}}, null, 2.0, null);
        ModelException e = assertThrows(ModelException.class, () -> SamplingPlanner.plan(discrete,
                new SamplingPlanner.Plan(3, new double[] {6}, one, sigma, null)));
        assertEquals("samplePeriod", e.field());
    }

    private static void plan(SamplingPlanner.Plan plan) {
        SamplingPlanner.plan(DOUBLE_INTEGRATOR, plan);
    }

    private static void assertField(String field, org.junit.jupiter.api.function.Executable call) {
        ModelException e = assertThrows(ModelException.class, call);
        assertEquals(field, e.field(), e.getMessage());
    }

    private static void assertClose(double[] expected, double[] got, String label) {
        for (int i = 0; i < expected.length; i++) {
            assertEquals(expected[i], got[i], CLOSED_FORM_TOLERANCE * Math.abs(expected[i]), label + " [" + i + "]");
        }
    }
}
