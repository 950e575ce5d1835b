package backstate.estimation;

import static backstate.estimation.EstimateCases.flat;
import static backstate.estimation.EstimateCases.vector;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.estimation.EstimateCases.Case;
import com.fasterxml.jackson.databind.JsonNode;
import java.util.stream.Stream;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.CholeskyDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Properties any weighted least-squares solution must have, checked on the reference cases with
 * quantities the generator computed independently of the engine (the regressors ∂ŷ/∂θ and the
 * forced output per sample, from scipy.linalg.expm).
 */
class InitialStateEstimatorPropertyTest {
    /**
     * Cosine between a weighted regressor column and the weighted residual at the optimum. Zero in
     * exact arithmetic (normal equations); in doubles the engine's and the generator's columns
     * differ by rounding accumulated over N ≤ 2000 steps, ~N·ε ≈ 4e-13, and the residual carries
     * ε·‖y‖/‖r‖ ≤ 1e-12 here. 1e-8 keeps four digits of margin; a fit off by one standard error
     * gives a cosine of order 1/√N ≈ 0.03.
     */
    private static final double ORTHOGONALITY_COSINE = 1e-8;

    /** Relative asymmetry allowed in the covariance: it should be symmetric to rounding (common practice, no source). */
    private static final double SYMMETRY = 1e-14;

    static Stream<Case> solvedCases() {
        return EstimateCases.solvedCases();
    }

    static Stream<Case> noisyCases() {
        return EstimateCases.solvedCases().filter(c -> !c.noiseFree());
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("solvedCases")
    void covariance_is_symmetric_positive_definite_and_inverts_the_information(Case c) {
        Estimate e = c.solveExpectingEstimate();
        int q = e.solution().length;
        double[] p = e.covariance();
        double pMax = 0.0;
        for (double v : p) {
            pMax = Math.max(pMax, Math.abs(v));
        }
        for (int i = 0; i < q; i++) {
            for (int j = 0; j < i; j++) {
                assertEquals(p[i * q + j], p[j * q + i], SYMMETRY * pMax, c + " P symmetric at " + i + "," + j);
            }
        }
        // Cholesky (Commons Math) succeeds iff P is positive definite; thresholds: symmetry as above,
        // positivity any pivot > 0 (the smallest eigenvalue of P is 1/λ_max(W) > 0).
        RealMatrix pm = new Array2DRowRealMatrix(Matrices.unflatten(p, q, q));
        new CholeskyDecomposition(pm, SYMMETRY, 0.0);
        if (c.options().formulation() == Formulation.CONTINUOUS) {
            return; // P is the sandwich W⁻¹ M W⁻¹, not W⁻¹; checked against numpy in InitialStateEstimatorReferenceTest
        }
        // P·W = I to within κ(W)·ε·(a few): the two are computed from the same factor R.
        RealMatrix w = new Array2DRowRealMatrix(Matrices.unflatten(e.conditioning().information(), q, q));
        RealMatrix product = pm.multiply(w);
        double kappa = e.conditioning().conditionNumber();
        double allowed = 100 * kappa * Math.ulp(1.0);
        for (int i = 0; i < q; i++) {
            for (int j = 0; j < q; j++) {
                double expected = i == j ? 1.0 : 0.0;
                assertEquals(expected, product.getEntry(i, j), allowed, c + " (P W)[" + i + "][" + j + "]");
            }
        }
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("solvedCases")
    void fitted_series_is_regressors_times_solution_plus_forced_output(Case c) {
        Estimate e = c.solveExpectingEstimate();
        Estimate.Series s = e.series();
        assertNotNull(s, c + " series kept by default");
        JsonNode x = c.expected();
        JsonNode regressors = x.get("regressors");
        double[] forced = flat(x.get("forcedOutput"));
        double[] y = flat(c.json().get("trace").get("outputs"));
        double[] times = vector(c.json().get("trace").get("times"));
        int p = c.model().outputs();
        int n = times.length;
        assertEquals(p, s.outputCount());
        for (int k = 0; k < n; k++) {
            assertEquals(times[k], s.times()[k], 0.0, c + " series time " + k);
        }
        double scale = 0.0;
        for (int i = 0; i < forced.length; i++) {
            scale = Math.max(scale, Math.abs(forced[i]) + Math.abs(Double.isNaN(y[i]) ? 0.0 : y[i]));
        }
        // Fitted = Σ_i (∂ŷ/∂θ_i) θ̂_i + C f_k + D u_k with the engine's own θ̂, so only the model
        // evaluation is compared: 1e-9 of the output scale (the generator's default tolerance).
        double tol = 1e-9 * scale;
        for (int k = 0; k < n; k++) {
            for (int j = 0; j < p; j++) {
                double fitted = forced[k * p + j] + dot(vector(regressors.get(k).get(j)), e.solution());
                String where = c + " sample " + k + " channel " + j;
                assertEquals(fitted, s.fitted()[k * p + j], tol, where + " fitted");
                if (Double.isNaN(y[k * p + j])) {
                    assertTrue(Double.isNaN(s.residuals()[k * p + j]), where + " residual NaN where y missing");
                } else {
                    // y − fitted evaluated in another order differs by a few ulp of the output scale.
                    assertEquals(y[k * p + j] - s.fitted()[k * p + j], s.residuals()[k * p + j], 1e-13 * scale,
                            where + " residual = y - fitted");
                }
            }
        }
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("noisyCases")
    void weighted_residuals_are_orthogonal_to_every_fitted_column(Case c) {
        // Normal equations M'(M θ̂ − b) = 0 (first-order optimality of ‖Mθ − b‖²), with the prior's rows
        // L⁻¹(x0 − μ) included: each column of M is orthogonal to the stacked weighted residual.
        Estimate e = c.solveExpectingEstimate();
        int p = c.model().outputs();
        int nStates = c.model().states();
        int q = e.solution().length;
        double[] weights = equationWeights(c, e);
        JsonNode regressors = c.expected().get("regressors");
        double[] residuals = e.series().residuals();
        int samples = residuals.length / p;
        double[] gradient = new double[q];
        double[] columnSquares = new double[q];
        double residualSquares = 0.0;
        for (int k = 0; k < samples; k++) {
            for (int j = 0; j < p; j++) {
                double r = residuals[k * p + j];
                if (Double.isNaN(r)) {
                    continue;
                }
                double w = weights[k * p + j];
                double[] g = vector(regressors.get(k).get(j));
                residualSquares += w * w * r * r;
                for (int i = 0; i < q; i++) {
                    gradient[i] += w * w * g[i] * r;
                    columnSquares[i] += w * w * g[i] * g[i];
                }
            }
        }
        JsonNode prior = c.json().get("options").get("prior");
        if (prior != null && !prior.isNull()) {
            // Prior rows L⁻¹ with residual L⁻¹(μ − x̂0) (same sign convention as y − ŷ).
            double[][] lInv = inverseCholesky(flat(prior.get("covariance")), nStates);
            double[] mu = vector(prior.get("mean"));
            for (int row = 0; row < nStates; row++) {
                double r = 0.0;
                for (int i = 0; i < nStates; i++) {
                    r += lInv[row][i] * (mu[i] - e.solution()[i]);
                }
                residualSquares += r * r;
                for (int i = 0; i < nStates; i++) {
                    gradient[i] += lInv[row][i] * r;
                    columnSquares[i] += lInv[row][i] * lInv[row][i];
                }
            }
        }
        if (c.options().formulation() == Formulation.SAMPLED) {
            // CONTINUOUS reports the per-sample fit's χ², not the trapezoid-weighted sum (reference test).
            assertEquals(e.chiSquare(), residualSquares, Math.max(c.tolerance("chiSquare"), 1e-9) * e.chiSquare(),
                    c + " chi2 equals the weighted residual sum of squares");
        }
        for (int i = 0; i < q; i++) {
            double cosine = gradient[i] / Math.sqrt(columnSquares[i] * residualSquares);
            assertEquals(0.0, cosine, ORTHOGONALITY_COSINE, c + " cos(column " + i + ", residual)");
        }
    }

    /**
     * Per-equation weights from the case's own definition: 1/σ_j (SAMPLED) or √w_kj/σ_j with
     * trapezoid weights over the channel's present samples in units of the trace's mean spacing
     * (CONTINUOUS); σ_j as the engine reports.
     */
    private static double[] equationWeights(Case c, Estimate e) {
        int p = c.model().outputs();
        double[] times = vector(c.json().get("trace").get("times"));
        double[] y = flat(c.json().get("trace").get("outputs"));
        double[] w = new double[y.length];
        boolean continuous = c.options().formulation() == Formulation.CONTINUOUS;
        double meanSpacing = (times[times.length - 1] - times[0]) / (times.length - 1);
        for (int j = 0; j < p; j++) {
            double sigma = e.channels().get(j).sigma();
            int channel = j;
            int[] present = java.util.stream.IntStream.range(0, times.length)
                    .filter(k -> !Double.isNaN(y[k * p + channel])).toArray();
            for (int idx = 0; idx < present.length; idx++) {
                int k = present[idx];
                double trap = 1.0;
                if (continuous) {
                    double before = idx == 0 ? times[k] : times[present[idx - 1]];
                    double after = idx == present.length - 1 ? times[k] : times[present[idx + 1]];
                    trap = (after - before) / 2.0 / meanSpacing;
                }
                w[k * p + j] = Math.sqrt(trap) / sigma;
            }
        }
        return w;
    }

    private static double[][] inverseCholesky(double[] covariance, int n) {
        RealMatrix l = new CholeskyDecomposition(new Array2DRowRealMatrix(Matrices.unflatten(covariance, n, n))).getL();
        return new org.apache.commons.math3.linear.LUDecomposition(l).getSolver().getInverse().getData();
    }

    private static double dot(double[] a, double[] b) {
        double s = 0.0;
        for (int i = 0; i < a.length; i++) {
            s += a[i] * b[i];
        }
        return s;
    }
}
