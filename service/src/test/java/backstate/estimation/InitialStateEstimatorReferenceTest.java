package backstate.estimation;

import static backstate.estimation.EstimateCases.assertCloseNormwise;
import static backstate.estimation.EstimateCases.assertCloseRelative;
import static backstate.estimation.EstimateCases.flat;
import static backstate.estimation.EstimateCases.vector;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.estimation.EstimateCases.Case;
import com.fasterxml.jackson.databind.JsonNode;
import java.util.ArrayList;
import java.util.List;
import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Every solved case of {@code test-data/reference/estimates} against numpy/scipy values from
 * {@code generate_estimates.py}: the stacked weighted equations solved with numpy.linalg.lstsq,
 * covariance from numpy.linalg.svd, p-values from scipy.stats.chi2.sf, Ljung–Box Q computed with
 * numpy (Ljung &amp; Box 1978, Biometrika 65(2)).
 *
 * <p>Tolerances are the generator's: 1e-9 relative where κ(W) ≤ 1e8; for the ill-conditioned case
 * (κ(W) = 1.0e10) the least-squares perturbation bound N·ε·(2κ + κ² tan θ) with κ = κ(M), times 10,
 * which gives 1.0e-5 on x̂0 (derivation in generate_estimates.py, {@code tolerances}).
 * Vectors and matrices are compared normwise (‖Δ‖ ≤ tol·‖expected‖).
 */
class InitialStateEstimatorReferenceTest {

    static Stream<Case> solvedCases() {
        return EstimateCases.solvedCases();
    }

    static Stream<Case> noisyCases() {
        return EstimateCases.solvedCases().filter(c -> !c.noiseFree());
    }

    static Stream<Case> referenceTimeCases() {
        return EstimateCases.solvedCases().filter(c -> c.expected().has("reference"));
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("solvedCases")
    void solution_matches_numpy_least_squares(Case c) {
        Estimate e = c.solveExpectingEstimate();
        JsonNode x = c.expected();
        List<String> names = new ArrayList<>();
        x.get("unknownNames").forEach(n -> names.add(n.asText()));
        assertEquals(names, e.unknownNames());
        assertCloseNormwise(vector(x.get("solution")), e.solution(), c.tolerance("solution"), c + " solution");
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("solvedCases")
    void covariance_and_information_match_numpy(Case c) {
        Estimate e = c.solveExpectingEstimate();
        JsonNode x = c.expected();
        assertCloseNormwise(flat(x.get("covariance")), e.covariance(), c.tolerance("covariance"), c + " covariance");
        assertCloseNormwise(vector(x.get("standardErrors")), e.standardErrors(), c.tolerance("covariance"),
                c + " standard errors");
        Conditioning k = e.conditioning();
        assertCloseNormwise(flat(x.get("information")), k.information(), c.tolerance("information"),
                c + " information M'M");
        // Eigenvalues of W = squared singular values of M (numpy.linalg.svd), ascending; normwise,
        // so the smallest is held to 1e-9 of the largest (its own relative accuracy is κ·ε at best).
        assertCloseNormwise(vector(x.get("eigenvalues")), k.eigenvalues(), c.tolerance("information"),
                c + " eigenvalues");
        // κ(W) = (s_max/s_min)² from numpy.linalg.svd(M); relative tolerance from the generator.
        assertCloseRelative(x.get("conditionNumber").asDouble(), k.conditionNumber(), c.tolerance("conditionNumber"),
                c + " condition number");
        assertEquals(x.get("rank").asInt(), k.rank(), c + " rank");
        assertEquals(x.get("dataRank").asInt(), k.dataRank(), c + " data rank (prior excluded)");
        // Weakest direction = last right singular vector of M, up to sign.
        double[] w = vector(x.get("weakestDirection"));
        double cos = Math.abs(dot(w, k.weakestDirection()));
        assertEquals(1.0, cos, c.tolerance("covariance"), c + " weakest direction |cos|");
        assertCloseRelative(x.get("weakestStd").asDouble(), k.weakestStd(), c.tolerance("covariance"),
                c + " weakest std 1/s_min");
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("noisyCases")
    void chi_square_degrees_of_freedom_and_p_match(Case c) {
        Estimate e = c.solveExpectingEstimate();
        JsonNode x = c.expected();
        assertEquals(x.get("degreesOfFreedom").asInt(), e.degreesOfFreedom(), c + " dof");
        assertCloseRelative(x.get("chiSquare").asDouble(), e.chiSquare(), c.tolerance("chiSquare"), c + " chi2");
        // p from scipy.stats.chi2.sf.
        assertCloseRelative(x.get("chiSquareP").asDouble(), e.chiSquareP(), c.tolerance("chiSquareP"), c + " chi2 p");
        assertCloseRelative(x.get("sigmaScale").asDouble(), e.sigmaScale(), c.tolerance("chiSquare"),
                c + " sigma scale sqrt(chi2/dof)");
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("noisyCases")
    void channel_diagnostics_match_numpy(Case c) {
        Estimate e = c.solveExpectingEstimate();
        JsonNode channels = c.expected().get("channels");
        assertEquals(channels.size(), e.channels().size(), c + " channel count");
        for (int j = 0; j < channels.size(); j++) {
            JsonNode x = channels.get(j);
            ChannelDiagnostics d = e.channels().get(j);
            String where = c + " channel " + j;
            assertEquals(x.get("samples").asInt(), d.samples(), where + " present samples");
            assertEquals(x.get("sigma").asDouble(), d.sigma(), 0.0, where + " sigma");
            assertEquals(ChannelDiagnostics.SigmaSource.valueOf(x.get("sigmaSource").asText()), d.sigmaSource(),
                    where + " sigma source");
            double tol = c.tolerance("channel");
            assertCloseRelative(x.get("rms").asDouble(), d.rms(), tol, where + " rms");
            assertCloseRelative(x.get("maxAbs").asDouble(), d.maxAbs(), tol, where + " max |r|");
            // 1 − R² = SS_res/SS_tot, so the absolute error of R² is that of SS_res relative, times 1 − R².
            double rSquared = x.get("rSquared").asDouble();
            assertEquals(rSquared, d.rSquared(), 2 * tol * (1 - rSquared) + 1e-15, where + " R^2");
            assertEquals(x.get("outliers").asInt(), d.outliers(), where + " outliers beyond 4 sigma");
            JsonNode lb = x.get("ljungBox");
            assertEquals(lb.get("lags").asInt(), d.ljungBoxLags(), where + " Ljung-Box lags min(10, N/5)");
            assertCloseRelative(lb.get("q").asDouble(), d.ljungBoxQ(), c.tolerance("ljungBox"), where + " Ljung-Box Q");
            assertCloseRelative(lb.get("p").asDouble(), d.ljungBoxP(), c.tolerance("ljungBoxP"), where + " Ljung-Box p");
        }
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("noisyCases")
    void interval_half_widths_follow_the_documented_quantile_rule(Case c) {
        // Rule from InitialStateEstimator's Javadoc: normal quantile × se when every σ is given,
        // Student-t(dof) quantile × se·σ̂ otherwise; quantiles from scipy.stats.norm/t.ppf(0.975).
        Estimate e = c.solveExpectingEstimate();
        double[] expected = vector(c.expected().get("interval").get("halfWidth"));
        double[] half = new double[expected.length];
        double[] centre = new double[expected.length];
        for (int i = 0; i < half.length; i++) {
            half[i] = 0.5 * (e.intervalUpper()[i] - e.intervalLower()[i]);
            centre[i] = 0.5 * (e.intervalUpper()[i] + e.intervalLower()[i]);
        }
        assertCloseNormwise(expected, half, Math.max(c.tolerance("covariance"), c.tolerance("chiSquare")),
                c + " interval half widths");
        assertCloseNormwise(e.solution(), centre, 1e-12, c + " interval centres");
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("noiseFreeCases")
    void noise_free_cases_leave_only_rounding_in_the_residuals(Case c) {
        Estimate e = c.solveExpectingEstimate();
        double[] y = flat(c.json().get("trace").get("outputs"));
        double yMax = 0.0;
        for (double v : y) {
            yMax = Math.max(yMax, Math.abs(v));
        }
        // Residuals of exact data are rounding: 1e-9 of the output scale is far above that and far
        // below any modelling error.
        for (ChannelDiagnostics d : e.channels()) {
            assertTrue(d.rms() <= 1e-9 * yMax, c + " rms " + d.rms() + " > 1e-9 * max|y| = " + 1e-9 * yMax);
        }
        assertEquals(c.expected().get("degreesOfFreedom").asInt(), e.degreesOfFreedom(), c + " dof");
    }

    static Stream<Case> noiseFreeCases() {
        return EstimateCases.solvedCases().filter(Case::noiseFree);
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("referenceTimeCases")
    void reference_state_matches_propagated_estimate(Case c) {
        Estimate e = c.solveExpectingEstimate();
        assertNotNull(e.reference(), c + " reference state");
        // x(t_ref) = Φ(t_ref − t0) x̂0 + forced response with the input held from the last sample ≤ t_ref;
        // Φ from scipy.linalg.expm, hold from expm([[A, B], [0, 0]] h).
        assertStateMatches(c, e, c.expected().get("reference"), e.reference(), "reference");
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("solvedCases")
    void window_end_state_matches_numpy_propagation(Case c) {
        Estimate e = c.solveExpectingEstimate();
        // x(t_N) = Φ(t_N − t0) x̂0 + forced response; Cov = Φ P Φ' (numpy, scipy.linalg.expm).
        assertStateMatches(c, e, c.expected().get("windowEnd"), e.windowEnd(), "window end");
    }

    private static void assertStateMatches(Case c, Estimate e, JsonNode x, Estimate.StateAt at, String what) {
        assertEquals(x.get("time").asDouble(), at.time(), 0.0, c + " " + what + " time");
        assertCloseNormwise(vector(x.get("state")), at.state(), c.tolerance("reference"), c + " " + what + " state");
        assertCloseNormwise(flat(x.get("covariance")), at.covariance(), c.tolerance("covariance"),
                c + " " + what + " covariance Φ P Φ'");
        assertCloseNormwise(vector(x.get("standardErrors")), at.standardErrors(), c.tolerance("covariance"),
                c + " " + what + " standard errors");
        assertIntervalsFollowTheRuleOfX0(c, e, at.state(), at.standardErrors(), at.lower(), at.upper(), what);
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("solvedCases")
    void state_trajectory_and_its_band_match_numpy_at_every_sample(Case c) {
        Estimate e = c.solveExpectingEstimate();
        JsonNode x = c.expected().get("stateTrajectory");
        Estimate.Series s = e.series();
        assertEquals(1, s.stride(), c + " stride");
        assertCloseNormwise(flat(x.get("states")), s.states(), c.tolerance("reference"), c + " x̂(t_k)");
        assertCloseNormwise(flat(x.get("standardErrors")), s.stateStandardErrors(), c.tolerance("covariance"),
                c + " standard error of x̂(t_k)");
        assertIntervalsFollowTheRuleOfX0(c, e, s.states(), s.stateStandardErrors(), s.stateLower(), s.stateUpper(),
                "trajectory");
    }

    /**
     * Half-widths at any time are the same multiple of the standard error as x̂0's: the numpy
     * half-width of x̂0 over its standard error (normal quantile, or Student-t times σ̂).
     */
    private static void assertIntervalsFollowTheRuleOfX0(Case c, Estimate e, double[] state, double[] se,
                                                         double[] lower, double[] upper, String what) {
        JsonNode interval = c.expected().get("interval");
        double[] se0 = vector(c.expected().get("standardErrors"));
        double multiple = interval.get("halfWidth").get(0).asDouble() / se0[0];
        for (int i = 0; i < state.length; i++) {
            double half = multiple * se[i];
            double scale = Math.max(Math.abs(state[i]), half);
            assertEquals(state[i] - half, lower[i], 1e-9 * scale, c + " " + what + " lower[" + i + "]");
            assertEquals(state[i] + half, upper[i], 1e-9 * scale, c + " " + what + " upper[" + i + "]");
        }
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("solvedCases")
    void flags_follow_the_documented_thresholds(Case c) {
        // Expected from the reference values and the thresholds documented in Conditioning and
        // EstimationOptions; MODEL_MISMATCH is only asserted where every p-value is at least a factor
        // 10 away from the 1e-3 level (the generator checks that), and never for noise-free data.
        Estimate e = c.solveExpectingEstimate();
        for (JsonNode f : c.expected().get("flagsPresent")) {
            assertTrue(e.flags().contains(Flag.valueOf(f.asText())), c + " expected flag " + f.asText() + " in " + e.flags());
        }
        for (JsonNode f : c.expected().get("flagsAbsent")) {
            assertFalse(e.flags().contains(Flag.valueOf(f.asText())), c + " unexpected flag " + f.asText() + " in " + e.flags());
        }
    }

    private static double dot(double[] a, double[] b) {
        double s = 0.0;
        for (int i = 0; i < a.length; i++) {
            s += a[i] * b[i];
        }
        return s;
    }
}
