package backstate.estimation;

import static backstate.estimation.EstimateCases.assertCloseNormwise;
import static backstate.estimation.EstimateCases.flat;
import static backstate.estimation.EstimateCases.vector;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Random;
import org.apache.commons.math3.distribution.BinomialDistribution;
import org.apache.commons.math3.distribution.ChiSquaredDistribution;
import org.apache.commons.math3.distribution.FDistribution;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.CholeskyDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * The SAMPLED formulation's reported uncertainty proven by Monte-Carlo with each option users set:
 * irregular times, missing values, per-channel σ from the trace and from the model, σ not given at
 * all, known inputs, a prior, sensor offsets, a reference time, a discrete model with gaps, and
 * evenly sampled stretches long enough to be folded by blocks. Designs (C Φ(t_k), the forced
 * response, Φ(t_k) and the forced state) and the closed-form covariances come from numpy / scipy
 * (test-data/reference/generate_sampled_coverage.py); the draws are made here, 2 000 per scenario:
 * x0 drawn from the prior where there is one, Gaussian noise of the true σ.
 *
 * <p>With independent Gaussian noise of the stated σ, the weighted least-squares estimate of
 * θ = (x0, offsets) is exactly N(θ, P) with P the inverse information matrix (Gauss–Markov; with a
 * prior and θ drawn from it, P is the posterior covariance), so:
 * <ul>
 *   <li>the reported covariance equals numpy's (MᵀM)⁻¹ of the same equations, and Φ P Φᵀ at the
 *       reference time, the window's end and every kept sample of the series, to 1e-9;</li>
 *   <li>the empirical spread of every estimated unknown, and of the estimated state at the reference
 *       time, the window's end and every kept sample, is within ±10 % of its reported standard error;
 *       every 95 % interval and band covers its truth in 95 ± 2 % of draws (series points 95 ± 2.5 %);</li>
 *   <li>the joint 95 % ellipsoid (θ̂ − θ)ᵀP⁻¹(θ̂ − θ) ≤ χ²_q(0.95) covers in 95 ± 2 %, so the reported
 *       correlations are right too; χ²/dof averages 1, and model_mismatch is as rare as its tests'
 *       sizes say ({@link #FLAG_BOUND_TAIL}).</li>
 * </ul>
 * When no σ is given anywhere (assumed 1; the true σ is the same on every channel) the intervals are
 * Student-t(dof) × σ̂ × the σ = 1 standard error, exact under that noise (Student 1908; any regression
 * text, e.g. Seber and Lee 2003, §5.1 — from memory), and the ellipsoid's statistic over q·σ̂² is
 * F(q, dof) (same source).
 */
class SampledCoverageTest {
    private static final int DRAWS = 2000;
    private static final long SEED = 20261203L;
    /** Relative agreement with numpy's dense closed form: two double builds of one small problem (common practice, no source). */
    private static final double CLOSED_FORM_RELATIVE = 1e-9;
    /**
     * Spread within ±10 % of the reported standard error and coverage 95 ± 2 % (the continuous
     * formulation's bands); over 2 000 draws a coverage share has standard deviation 0.49 %, so ±2 %
     * is 4 of them and ±2.5 % for each of the hundreds of series points is 5 (common practice, no source).
     */
    private static final double COVERAGE_BAND = 0.02;
    private static final double SERIES_POINT_COVERAGE_BAND = 0.025;
    /** Mean of χ²/dof over D draws: variance 2/(dof·D); 4 standard deviations (common practice, no source). */
    private static final double CHI_SQUARE_SIGMAS = 4.0;
    /**
     * A correct engine exceeds the model_mismatch bound with probability below this: the bound is the
     * Binomial(draws, rate) quantile, rate = the χ² test's level (when every σ is given) plus each
     * channel's Ljung–Box size at level/p, which numpy measures on white sequences of the channel's
     * length (generator, "ljungBoxSize"): the test's χ² reference is anti-conservative that far in
     * its tail for a few hundred values, 1.3–3.6 times level/p in these scenarios.
     */
    private static final double FLAG_BOUND_TAIL = 1e-3;

    static List<JsonNode> scenarios() {
        return CoverageTally.scenarios("sampled-coverage.json.gz");
    }

    @ParameterizedTest(name = "{index}")
    @MethodSource("scenarios")
    void every_reported_uncertainty_matches_numpy_and_covers_what_it_claims(JsonNode s) {
        Scenario sc = new Scenario(s);
        Random random = new Random(SEED);
        Draws draws = new Draws(sc);
        for (int d = 0; d < DRAWS; d++) {
            double[] x0 = sc.drawInitialState(random);
            Estimate e = sc.solve(sc.outputs(x0, random));
            if (d == 0) {
                sc.assertClosedForms(e);
            }
            draws.add(e, x0);
        }
        draws.check();
    }

    /** One scenario's design, truth and options, read from the generator's file. */
    private static final class Scenario {
        final String name;
        final JsonNode json;
        final StateSpaceModel model;
        final int n;
        final int p;
        final int q;
        final double[] times;
        final double[] inputs;
        final double[] traceSigma;
        final boolean[][] missing;
        final EstimationOptions options;
        final double[] trueSigma;
        final double[] trueOffsets;
        final boolean sigmaAllGiven;
        final double[][] regressors;
        final double[] forcedOutput;
        final double[][] phis;
        final double[][] forcedStates;
        final double[] expectedCovariance;
        final double[][] priorFactor;
        final double[] priorMean;

        Scenario(JsonNode s) {
            name = s.get("name").asText();
            json = s;
            model = EstimateCases.model(s.get("model"));
            n = model.states();
            p = model.outputs();
            JsonNode o = s.get("options");
            q = n + (o.get("offsets").asBoolean() ? p : 0);
            JsonNode t = s.get("trace");
            times = vector(t.get("times"));
            inputs = t.get("inputs").isNull() ? null : flat(t.get("inputs"));
            traceSigma = t.get("noiseSigma").isNull() ? null : vector(t.get("noiseSigma"));
            missing = new boolean[times.length][p];
            for (int k = 0; k < times.length; k++) {
                for (int j = 0; j < p; j++) {
                    missing[k][j] = s.get("missing").get(k).get(j).asBoolean();
                }
            }
            options = EstimateCases.options(o).withSeriesStride(o.get("seriesStride").asInt());
            JsonNode truth = s.get("truth");
            trueSigma = vector(truth.get("noiseSd"));
            trueOffsets = vector(truth.get("offsets"));
            JsonNode expected = s.get("expected");
            sigmaAllGiven = expected.get("sigmaAllGiven").asBoolean();
            JsonNode design = s.get("design");
            regressors = new double[times.length][];
            phis = new double[times.length][];
            for (int k = 0; k < times.length; k++) {
                regressors[k] = flat(design.get("regressors").get(k));
                phis[k] = flat(design.get("phis").get(k));
            }
            forcedOutput = flat(design.get("forcedOutput"));
            forcedStates = EstimateCases.matrix(design.get("forcedStates"));
            expectedCovariance = flat(expected.get("covariance"));
            if (truth.path("drawFromPrior").asBoolean()) {
                JsonNode prior = o.get("prior");
                priorMean = vector(prior.get("mean"));
                priorFactor = new CholeskyDecomposition(new Array2DRowRealMatrix(EstimateCases.matrix(prior.get("covariance"))))
                        .getL().getData();
            } else {
                priorMean = vector(truth.get("x0"));
                priorFactor = null;
            }
        }

        /** The draw's true x0: the prior mean plus L·z (P0 = L Lᵀ, z standard normal), or the fixed truth. */
        double[] drawInitialState(Random random) {
            double[] x0 = priorMean.clone();
            if (priorFactor != null) {
                double[] z = new double[n];
                for (int i = 0; i < n; i++) {
                    z[i] = random.nextGaussian();
                }
                for (int i = 0; i < n; i++) {
                    for (int k = 0; k <= i; k++) {
                        x0[i] += priorFactor[i][k] * z[k];
                    }
                }
            }
            return x0;
        }

        /** y_kj = C_j Φ(t_k) x0 + forced output + offset_j + σ_j·noise, NaN where the design has a gap. */
        double[] outputs(double[] x0, Random random) {
            double[] y = new double[times.length * p];
            for (int k = 0; k < times.length; k++) {
                for (int j = 0; j < p; j++) {
                    double clean = forcedOutput[k * p + j] + trueOffsets[j];
                    for (int i = 0; i < n; i++) {
                        clean += regressors[k][j * n + i] * x0[i];
                    }
                    double noise = trueSigma[j] * random.nextGaussian(); // drawn even where missing: same stream
                    y[k * p + j] = missing[k][j] ? Double.NaN : clean + noise;
                }
            }
            return y;
        }

        Estimate solve(double[] y) {
            Trace trace = new Trace(times, y, inputs, p, model.inputs(), traceSigma);
            EstimationResult result = InitialStateEstimator.solve(model, trace, options);
            assertTrue(result instanceof Estimate, name + ": got " + result);
            return (Estimate) result;
        }

        /** The true state at sample k: Φ(t_k) x0 + f_k. */
        double[] stateAt(int k, double[] x0) {
            return plus(times(phis[k], x0), forcedStates[k]);
        }

        double[] referenceState(double[] x0) {
            JsonNode design = json.get("design");
            return plus(times(flat(design.get("referencePhi")), x0), vector(design.get("referenceForced")));
        }

        double[] unknowns(double[] x0) {
            double[] theta = java.util.Arrays.copyOf(x0, q);
            System.arraycopy(trueOffsets, 0, theta, n, q - n);
            return theta;
        }

        int sampleIndex(double time) {
            int k = java.util.Arrays.binarySearch(times, time);
            assertTrue(k >= 0, name + ": series time " + time + " is not a sample time");
            return k;
        }

        void assertClosedForms(Estimate e) {
            JsonNode expected = json.get("expected");
            assertEquals(expected.get("degreesOfFreedom").asInt(), e.degreesOfFreedom(), name + ": degrees of freedom");
            assertCloseNormwise(expectedCovariance, e.covariance(), CLOSED_FORM_RELATIVE, name + ": covariance vs numpy (MᵀM)⁻¹");
            assertCloseNormwise(flat(expected.get("reference")), e.reference().covariance(), CLOSED_FORM_RELATIVE,
                    name + ": reference-time covariance vs numpy Φ P Φᵀ");
            assertCloseNormwise(flat(expected.get("windowEnd")), e.windowEnd().covariance(), CLOSED_FORM_RELATIVE,
                    name + ": window-end covariance vs numpy Φ P Φᵀ");
            Estimate.Series series = e.series();
            double[] numpy = new double[series.times().length * n];
            for (int i = 0; i < series.times().length; i++) {
                int k = sampleIndex(series.times()[i]);
                for (int c = 0; c < n; c++) {
                    numpy[i * n + c] = expected.get("stateStandardErrors").get(k).get(c).asDouble();
                }
            }
            assertCloseNormwise(numpy, series.stateStandardErrors(), CLOSED_FORM_RELATIVE,
                    name + ": series state standard errors vs numpy");
        }
    }

    /** Everything the draws are checked for, accumulated draw by draw. */
    private static final class Draws {
        private final Scenario sc;
        private final CoverageTally unknowns;
        private final CoverageTally reference;
        private final CoverageTally windowEnd;
        private final List<CoverageTally> seriesPoints = new ArrayList<>();
        private double[][] precisionFactor;
        private double[] reportedSe;
        private double[] reportedReferenceSe;
        private double[] reportedEndSe;
        private double[] reportedSeriesSe;
        private double ellipsoidQuantile;
        private int ellipsoidCovered;
        private double chiSquarePerDof;
        private int flagged;
        private int dof;
        private int count;

        Draws(Scenario sc) {
            this.sc = sc;
            this.unknowns = new CoverageTally(sc.q);
            this.reference = new CoverageTally(sc.n);
            this.windowEnd = new CoverageTally(sc.n);
        }

        void add(Estimate e, double[] x0) {
            if (count == 0) {
                first(e);
            }
            double[] theta = sc.unknowns(x0);
            unknowns.add(theta, e.solution(), e.intervalLower(), e.intervalUpper());
            reference.add(sc.referenceState(x0), e.reference().state(), e.reference().lower(), e.reference().upper());
            int last = sc.times.length - 1;
            windowEnd.add(sc.stateAt(last, x0), e.windowEnd().state(), e.windowEnd().lower(), e.windowEnd().upper());
            Estimate.Series series = e.series();
            int n = sc.n;
            for (int i = 0; i < seriesPoints.size(); i++) {
                int from = i * n;
                seriesPoints.get(i).add(sc.stateAt(sc.sampleIndex(series.times()[i]), x0),
                        slice(series.states(), from, n), slice(series.stateLower(), from, n), slice(series.stateUpper(), from, n));
            }
            double statistic = mahalanobis(minus(e.solution(), theta));
            if (!sc.sigmaAllGiven) {
                statistic /= sc.q * e.sigmaScale() * e.sigmaScale();
            }
            if (statistic <= ellipsoidQuantile) {
                ellipsoidCovered++;
            }
            chiSquarePerDof += e.chiSquare() / e.degreesOfFreedom();
            if (e.flags().contains(Flag.MODEL_MISMATCH)) {
                flagged++;
            }
            count++;
        }

        private void first(Estimate e) {
            dof = e.degreesOfFreedom();
            double scale = trueScale();
            reportedSe = scaled(e.standardErrors(), scale);
            reportedReferenceSe = scaled(e.reference().standardErrors(), scale);
            reportedEndSe = scaled(e.windowEnd().standardErrors(), scale);
            reportedSeriesSe = scaled(e.series().stateStandardErrors(), scale);
            for (int i = 0; i < e.series().times().length; i++) {
                seriesPoints.add(new CoverageTally(sc.n));
            }
            RealMatrix precision = new CholeskyDecomposition(new Array2DRowRealMatrix(
                    Matrices.unflatten(e.covariance(), sc.q, sc.q))).getSolver().getInverse();
            precisionFactor = new CholeskyDecomposition(precision).getLT().getData();
            ellipsoidQuantile = sc.sigmaAllGiven
                    ? new ChiSquaredDistribution(sc.q).inverseCumulativeProbability(0.95)
                    : new FDistribution(sc.q, dof).inverseCumulativeProbability(0.95);
        }

        /**
         * What the reported (σ-given) standard errors are multiplied by to give the true spread: 1 when
         * σ is given, else the true σ (the same on every channel: the scaled rule assumes one scale).
         */
        private double trueScale() {
            if (sc.sigmaAllGiven) {
                return 1.0;
            }
            for (double s : sc.trueSigma) {
                assertEquals(sc.trueSigma[0], s, 0.0, sc.name + ": the scaled rule's scenario needs one true σ");
            }
            return sc.trueSigma[0];
        }

        /** How often a healthy draw may be flagged: see {@link #FLAG_BOUND_TAIL}. */
        private int maxMismatchFlags() {
            JsonNode expected = sc.json.get("expected");
            double rate = sc.sigmaAllGiven ? expected.get("mismatchLevel").asDouble() : 0.0;
            for (JsonNode channel : expected.get("ljungBoxSize")) {
                rate += channel.get("size").asDouble();
            }
            return new BinomialDistribution(count, rate).inverseCumulativeProbability(1.0 - FLAG_BOUND_TAIL);
        }

        /** ‖Lᵀ e‖² = eᵀ P⁻¹ e with P⁻¹ = L Lᵀ. */
        private double mahalanobis(double[] error) {
            double sum = 0.0;
            for (double[] row : precisionFactor) {
                double v = 0.0;
                for (int k = 0; k < error.length; k++) {
                    v += row[k] * error[k];
                }
                sum += v * v;
            }
            return sum;
        }

        void check() {
            String name = sc.name;
            unknowns.check(reportedSe, COVERAGE_BAND, name + ": θ", true);
            reference.check(reportedReferenceSe, COVERAGE_BAND, name + ": state at the reference time", true);
            windowEnd.check(reportedEndSe, COVERAGE_BAND, name + ": state at the window's end", true);
            double worst = 1.0;
            for (int i = 0; i < seriesPoints.size(); i++) {
                worst = Math.min(worst, seriesPoints.get(i).check(slice(reportedSeriesSe, i * sc.n, sc.n),
                        SERIES_POINT_COVERAGE_BAND, name + ": series point " + i, false));
            }
            double meanChiSquarePerDof = chiSquarePerDof / count;
            double chiBand = CHI_SQUARE_SIGMAS * Math.sqrt(2.0 / (dof * (double) count));
            double expectedChi = sc.sigmaAllGiven ? 1.0 : sc.trueSigma[0] * sc.trueSigma[0];
            System.out.printf(Locale.ROOT, "%s: %d series points, lowest band coverage %.4f; ellipsoid coverage %.4f;"
                            + " mean χ²/dof %.4f (expected %.4f ± %.4f); model_mismatch on %d of %d draws (at most %d)%n",
                    name, seriesPoints.size(), worst, ellipsoidCovered / (double) count, meanChiSquarePerDof, expectedChi,
                    chiBand * expectedChi, flagged, count, maxMismatchFlags());
            assertEquals(0.95, ellipsoidCovered / (double) count, COVERAGE_BAND, name + ": joint 95 % ellipsoid coverage");
            assertEquals(expectedChi, meanChiSquarePerDof, chiBand * expectedChi, name + ": mean χ²/dof");
            int maxFlags = maxMismatchFlags();
            assertTrue(flagged <= maxFlags, name + ": model_mismatch on " + flagged + " of " + count
                    + " healthy draws, expected at most " + maxFlags);
        }
    }

    private static double[] times(double[] matrix, double[] x) {
        int rows = matrix.length / x.length;
        double[] out = new double[rows];
        Matrices.multiplyVector(matrix, x, rows, x.length, out);
        return out;
    }

    private static double[] plus(double[] a, double[] b) {
        double[] out = a.clone();
        for (int i = 0; i < out.length; i++) {
            out[i] += b[i];
        }
        return out;
    }

    private static double[] minus(double[] a, double[] b) {
        double[] out = a.clone();
        for (int i = 0; i < out.length; i++) {
            out[i] -= b[i];
        }
        return out;
    }

    private static double[] scaled(double[] v, double factor) {
        double[] out = v.clone();
        for (int i = 0; i < out.length; i++) {
            out[i] *= factor;
        }
        return out;
    }

    private static double[] slice(double[] v, int from, int length) {
        return java.util.Arrays.copyOfRange(v, from, from + length);
    }
}
