package backstate.estimation;

import static backstate.estimation.EstimateCases.assertCloseNormwise;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.estimation.EstimateCases.Case;
import java.util.stream.Stream;
import org.apache.commons.math3.linear.EigenDecomposition;
import org.apache.commons.math3.linear.MatrixUtils;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/** Properties of the process-noise formulation that need no reference file beyond the sampled estimates. */
class ProcessNoiseSmootherPropertyTest {
    /** χ² of noise-free data is rounding (≈1e-24); whitened residuals of rounding size square to far below this. */
    static final double CHI_SQUARE_FLOOR = 1e-12;

    static Stream<Case> sampledCases() {
        return EstimateCases.solvedCases().filter(c -> c.options().formulation() == Formulation.SAMPLED);
    }

    /**
     * Zero process noise leaves the deterministic transition on every step, so the MAP estimate is the
     * sampled least-squares estimate (whose own numpy reference is generate_estimates.py): agreement to
     * the tolerance that reference grants each case (1e-9, or the perturbation bound when ill-conditioned).
     */
    @ParameterizedTest(name = "{0}")
    @MethodSource("sampledCases")
    void zero_process_noise_gives_the_sampled_estimate(Case c) {
        EstimationOptions options = c.options().withReferenceTime(null);
        Estimate sampled = assertInstanceOf(Estimate.class, InitialStateEstimator.solve(c.model(), c.trace(), options));
        int n = c.model().states();
        StateSpaceModel quiet = c.model().withProcessNoise(new double[n][n]);
        if (!everySigmaGiven(c)) {
            // Process noise is stated in the states' units: without every σ the formulation is refused (NoiseLevels).
            assertEquals("noiseSigma", assertThrows(ModelException.class, () -> InitialStateEstimator.solve(quiet, c.trace(),
                    options.withFormulation(Formulation.PROCESS_NOISE))).field().split("\\[")[0]);
            return;
        }
        Estimate smoothed = assertInstanceOf(Estimate.class, InitialStateEstimator.solve(quiet, c.trace(),
                options.withFormulation(Formulation.PROCESS_NOISE)));
        double tol = c.tolerance("solution");
        assertCloseNormwise(sampled.solution(), smoothed.solution(), tol, c + " solution");
        assertCloseNormwise(sampled.covariance(), smoothed.covariance(), tol, c + " covariance");
        assertEquals(sampled.chiSquare(), smoothed.chiSquare(),
                Math.max(Math.max(tol, 1e-9) * sampled.chiSquare(), CHI_SQUARE_FLOOR), c + " chi-square");
        assertEquals(sampled.degreesOfFreedom(), smoothed.degreesOfFreedom(), c + " dof");
        assertCloseNormwise(sampled.windowEnd().state(), smoothed.windowEnd().state(), tol, c + " window end");
    }

    private static boolean everySigmaGiven(Case c) {
        for (int j = 0; j < c.model().outputs(); j++) {
            if (Double.isNaN(c.trace().noiseSigma(j)) && c.model().defaultNoiseSigma() == null) {
                return false;
            }
        }
        return true;
    }

    /** More process noise can only lose information about x0: Cov grows in the Loewner order, so every variance grows (GLS, Σ ↑ ⇒ (OᵀΣ⁻¹O)⁻¹ ↑). */
    @Test
    void more_process_noise_never_narrows_a_standard_error() {
        double[] previous = null;
        for (double level : new double[] {0.0, 1e-4, 1e-2, 1.0}) {
            Estimate e = solve(oscillator(level), trace(0), options());
            if (previous != null) {
                for (int i = 0; i < previous.length; i++) {
                    assertTrue(e.standardErrors()[i] >= previous[i] * (1 - 1e-12),
                            "level " + level + " state " + i + ": " + e.standardErrors()[i] + " < " + previous[i]);
                }
            }
            previous = e.standardErrors();
        }
    }

    /** Covariances of x0, of the window end and of every smoothed state are symmetric positive semi-definite. */
    @Test
    void covariances_are_symmetric_positive_semi_definite() {
        Estimate e = solve(oscillator(0.05), trace(0), options());
        assertSymmetricPsd(e.covariance(), 2, "x0");
        assertSymmetricPsd(e.windowEnd().covariance(), 2, "window end");
        for (double v : e.series().stateStandardErrors()) {
            assertTrue(v > 0.0 && Double.isFinite(v), "state standard error " + v);
        }
    }

    /**
     * The remainder a sample leaves is its normalised innovation with the sign of y − ŷ: on exact
     * model data every innovation is 0 (up to rounding) except at a sample pushed up by 1, whose
     * innovation is then positive; a sign slip would make the mean negative.
     */
    @Test
    void an_outlier_above_the_prediction_gives_a_positive_innovation() {
        Estimate e = solve(oscillator(0.05), trace(1.0), options());
        InnovationStatistics stats = e.innovations().get(0);
        assertTrue(stats.mean() > 0.0, "mean " + stats.mean());
        assertTrue(stats.mean() * stats.samples() > 1.0, "sum " + stats.mean() * stats.samples());
    }

    @Test
    void a_reference_time_between_samples_is_refused_naming_the_field() {
        ModelException e = assertThrows(ModelException.class, () -> InitialStateEstimator.solve(oscillator(0.05),
                trace(0), options().withReferenceTime(0.35)));
        assertEquals("referenceTime", e.field());
    }

    @Test
    void asymmetric_or_indefinite_process_noise_is_refused_naming_the_field() {
        StateSpaceModel base = oscillator(0.0);
        assertEquals("processNoise[0][1]", assertThrows(ModelException.class,
                () -> base.withProcessNoise(new double[][] {{1, 0.5}, {0.4, 1}})).field());
        assertEquals("processNoise", assertThrows(ModelException.class,
                () -> base.withProcessNoise(new double[][] {{1, 2}, {2, 1}})).field());
        assertEquals("processNoise[1]", assertThrows(ModelException.class,
                () -> base.withProcessNoise(new double[][] {{1, 0}, {0}})).field());
        assertEquals("processNoise[1][1]", assertThrows(ModelException.class,
                () -> base.withProcessNoise(new double[][] {{1, 0}, {0, Double.NaN}})).field());
    }

    static StateSpaceModel oscillator(double level) {
        return StateSpaceModel.continuous(new double[][] {{0, 1}, {-4, -0.4}}, null, new double[][] {{1, 0}}, null, null)
                .withProcessNoise(new double[][] {{0, 0}, {0, level}});
    }

    /** 80 samples, 0.1 s apart, of the noise-free response from x0 = (1, 0), sample 10 raised by {@code bump}. */
    static Trace trace(double bump) {
        int n = 80;
        double[] t = new double[n];
        double[] y = new double[n];
        for (int k = 0; k < n; k++) {
            t[k] = 0.1 * k;
            double w = Math.sqrt(4 - 0.04);
            y[k] = Math.exp(-0.2 * t[k]) * (Math.cos(w * t[k]) + 0.2 / w * Math.sin(w * t[k]));
        }
        y[10] += bump;
        return new Trace(t, y, null, 1, 0, new double[] {0.05});
    }

    static EstimationOptions options() {
        return EstimationOptions.defaults().withFormulation(Formulation.PROCESS_NOISE);
    }

    static Estimate solve(StateSpaceModel model, Trace trace, EstimationOptions options) {
        return assertInstanceOf(Estimate.class, InitialStateEstimator.solve(model, trace, options));
    }

    static void assertSymmetricPsd(double[] m, int n, String what) {
        for (int i = 0; i < n; i++) {
            for (int j = 0; j < n; j++) {
                assertEquals(m[i * n + j], m[j * n + i], 0.0, what + " symmetric");
            }
        }
        double[] values = new EigenDecomposition(MatrixUtils.createRealMatrix(Matrices.unflatten(m, n, n)))
                .getRealEigenvalues();
        for (double v : values) {
            assertTrue(v > 0.0, what + " eigenvalue " + v);
        }
    }
}
