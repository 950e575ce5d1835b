package backstate.estimation;

import backstate.text.Counted;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;

/**
 * Observability planning before any data exist: for a sampling plan (sample period, candidate
 * horizons, which outputs are measured, noise σ per output) the standard error every state of
 * x0 would get, and the shortest candidate horizon that meets target standard errors.
 *
 * <p>Method: with samples t_k = k·T, k = 0..N−1, and the measured outputs S, the information
 * matrix is the weighted sampled observability Gramian W = Σ_k G_kᵀ Σ_S⁻¹ G_k, G_k = C_S Φ(t_k).
 * It does not depend on the data, so the covariance R⁻¹R⁻ᵀ a trace of the plan would get is
 * known in advance (for Gaussian noise it is the Cramér–Rao bound, which weighted least squares
 * attains in the linear model: Kay 1993, Fundamentals of Statistical Signal Processing: Estimation
 * Theory, ch. 4, Theorem 4.1 and §4.5 — from memory). W is accumulated
 * exactly as {@link EquationPass} does for a trace — rows C_S,j Φ(t_k)/σ_j in sample order, then
 * output order, G_k = G_{k−1}·Φ(t_k − t_{k−1}) from the same {@link TransitionCache}, folded by
 * sequential Householder QR into a {@link SquareRootInformation} (Lawson &amp; Hanson 1974, ch. 27) —
 * so the factor R equals the estimator's up to where pending rows are flushed. The covariance
 * comes from R by triangular inversion (never W⁻¹), rank and the weakest direction from the SVD
 * of R ({@link ConditioningAnalysis}). One pass per output subset serves every horizon: the
 * factor is read off as the pass reaches each horizon's last sample.
 *
 * <p>A model that declares process noise is planned under the process-noise formulation: its
 * predictions are the smoother's covariance of x0 ({@link NoisePlanSweep}), wider than the
 * deterministic ones because the disturbance hides part of what the samples say about x0.
 *
 * <p>Structural observability of (A, C_S) — whether any horizon could do — is the Kalman rank
 * test of {@link ObservabilityRank}; a full-rank pair whose sampled Gramian stays rank-deficient
 * has too few samples or a period that aliases one of its modes.
 */
public final class SamplingPlanner {
    /**
     * Most equations (samples × measured outputs, summed over the subsets) one plan may need:
     * each costs O(n²) flops, so 10⁶ is at most a few seconds at the 64-state limit and keeps a
     * synchronous request bounded.
     */
    public static final long MAX_EQUATIONS = 1_000_000;
    /**
     * A horizon within this relative distance of a whole number of periods counts as that whole
     * number, so decimal inputs such as 0.3 s / 0.1 s give 3 steps and not 2.9999999999999996.
     */
    static final double WHOLE_PERIODS_TOLERANCE = 1e-9;

    private SamplingPlanner() {
    }

    /**
     * A sampling plan.
     *
     * @param samplePeriod    seconds between samples, finite and &gt; 0
     * @param horizons        candidate window lengths in seconds, finite, ≥ 0 and strictly increasing; a horizon
     *                        H holds the samples t_k = k·T ≤ H, k = 0, 1, …
     * @param outputSubsets   each a non-empty set of output indices (0-based, distinct)
     * @param noiseSigma      σ per output (length p); entries of outputs in no subset are not read
     * @param targetStdErrors target standard error per state (length n, NaN for none), or null for no targets
     */
    public record Plan(double samplePeriod, double[] horizons, int[][] outputSubsets, double[] noiseSigma,
                       double[] targetStdErrors) {
    }

    /** How a subset of outputs fares against the targets. */
    public enum Verdict {
        /** At least one horizon meets every target; the shortest such is reported. */
        MEETS_TARGETS,
        /** Every horizon determines x0, none to the targets. */
        TARGETS_NOT_MET,
        /** No plan was given targets; the predictions stand alone. */
        NO_TARGETS,
        /** (A, C_S) is unobservable: no horizon or period determines the listed directions. */
        UNOBSERVABLE_WITH_THESE_OUTPUTS,
        /** (A, C_S) is observable but every candidate has too few samples, or T aliases a mode. */
        RANK_DEFICIENT_AT_EVERY_HORIZON
    }

    /**
     * What one horizon predicts for one subset. Vectors are over the states, matrices n×n row-major.
     *
     * @param samples                sample times in the horizon, N
     * @param equations              rows behind W (N × measured outputs)
     * @param rank                   numerical rank of R (n when x0 is determined)
     * @param standardErrors         sqrt of the covariance diagonal, or null when rank &lt; n
     * @param covariance             R⁻¹R⁻ᵀ, or null when rank &lt; n
     * @param information            W = RᵀR (for reporting; never inverted)
     * @param conditionNumber        κ(W), infinite when rank &lt; n
     * @param weakestDirection       unit eigenvector of W's smallest eigenvalue
     * @param weakestStd             standard deviation along it, 1/s_min(R)
     * @param unobservableDirections unit vectors spanning W's numerical null space (empty when rank = n)
     * @param meetsTargets           every targeted state's standard error within its target; null without targets
     */
    public record Prediction(double horizon, long samples, long equations, int rank, double[] standardErrors,
                             double[] covariance, double[] information, double conditionNumber,
                             double[] weakestDirection, double weakestStd, List<double[]> unobservableDirections,
                             Boolean meetsTargets) {
    }

    /**
     * The predictions for one subset of outputs, one per horizon in the plan's order.
     *
     * @param outputs                 the subset's output indices, ascending
     * @param observable              whether (A, C_S) passes the Kalman rank test
     * @param unobservableDirections  unit vectors spanning its unobservable subspace (empty when observable)
     * @param shortestMeetingTargets  index into predictions of the shortest horizon meeting the targets, or −1
     */
    public record SubsetPlan(int[] outputs, boolean observable, List<double[]> unobservableDirections,
                             List<Prediction> predictions, int shortestMeetingTargets, Verdict verdict) {
    }

    /**
     * Predicts every subset at every horizon; a plan that does not fit the model throws {@link ModelException}.
     * Method: sequential Householder QR of the Gramian's weighted rows (Lawson &amp; Hanson 1974, ch. 27), covariance by
     * back substitution (Golub &amp; Van Loan 2013, §3.1); see the class comment.
     */
    public static List<SubsetPlan> plan(StateSpaceModel model, Plan plan) {
        long[] samples = validate(model, plan);
        List<SubsetPlan> out = new ArrayList<>();
        for (int[] subset : plan.outputSubsets()) {
            int[] outputs = subset.clone();
            Arrays.sort(outputs); // the estimator's row order: outputs in model order within a sample
            out.add(subsetPlan(model, plan, outputs, samples));
        }
        return out;
    }

    /** Samples t_k = k·T, k = 0..N−1, with k·T ≤ horizon (within {@link #WHOLE_PERIODS_TOLERANCE}). */
    public static long samples(double horizon, double samplePeriod) {
        double ratio = horizon / samplePeriod;
        long nearest = Math.round(ratio);
        boolean whole = Math.abs(ratio - nearest) <= WHOLE_PERIODS_TOLERANCE * Math.max(1.0, ratio);
        return (whole ? nearest : (long) Math.floor(ratio)) + 1;
    }

    private static SubsetPlan subsetPlan(StateSpaceModel model, Plan plan, int[] outputs, long[] samples) {
        ObservabilityRank.Report structural = ObservabilityRank.of(restricted(model, outputs));
        List<Prediction> predictions = model.processNoise() == null ? sweep(model, plan, outputs, samples)
                : NoisePlanSweep.sweep(model, plan, outputs, samples);
        boolean anyFullRank = predictions.stream().anyMatch(p -> p.rank() == model.states());
        int shortest = -1;
        for (int i = 0; i < predictions.size() && shortest < 0; i++) {
            if (Boolean.TRUE.equals(predictions.get(i).meetsTargets())) {
                shortest = i;
            }
        }
        Verdict verdict;
        if (!structural.observable()) {
            verdict = Verdict.UNOBSERVABLE_WITH_THESE_OUTPUTS;
        } else if (!anyFullRank) {
            verdict = Verdict.RANK_DEFICIENT_AT_EVERY_HORIZON;
        } else if (plan.targetStdErrors() == null) {
            verdict = Verdict.NO_TARGETS;
        } else {
            verdict = shortest >= 0 ? Verdict.MEETS_TARGETS : Verdict.TARGETS_NOT_MET;
        }
        return new SubsetPlan(outputs, structural.observable(), structural.unobservable(), predictions, shortest,
                verdict);
    }

    /** One pass over the longest horizon's samples, reading the factor off at each horizon's last sample. */
    private static List<Prediction> sweep(StateSpaceModel model, Plan plan, int[] outputs, long[] samples) {
        int n = model.states();
        int s = outputs.length;
        double[] c = model.c();
        double[] g = new double[s * n];
        double[] gNext = new double[s * n];
        double[] weight = new double[s];
        for (int r = 0; r < s; r++) {
            System.arraycopy(c, outputs[r] * n, g, r * n, n);
            weight[r] = 1.0 / plan.noiseSigma()[outputs[r]];
        }
        double[] row = new double[n];
        SampleSteps steps = new SampleSteps(model, 0.0);
        TransitionCache transitions = new TransitionCache(model, steps);
        SquareRootInformation info = new SquareRootInformation(n);
        List<Prediction> out = new ArrayList<>();
        long last = samples[samples.length - 1];
        long previousUnits = 0;
        int next = 0;
        for (long k = 0; k < last; k++) {
            if (k > 0) {
                long units = steps.unitsFromStart(k * plan.samplePeriod(), "samplePeriod");
                Matrices.multiplyInto(g, transitions.over(units - previousUnits).transition(), s, n, n, gNext);
                double[] swap = g;
                g = gNext;
                gNext = swap;
                previousUnits = units;
            }
            for (int r = 0; r < s; r++) {
                for (int i = 0; i < n; i++) {
                    row[i] = g[r * n + i] * weight[r];
                }
                info.add(row, 0.0);
            }
            while (next < samples.length && samples[next] == k + 1) {
                requireFinite(info.factorR(), next, plan.horizons()[next]);
                out.add(predict(info.factorR(), n, info.equations(), plan.horizons()[next], k + 1,
                        plan.targetStdErrors()));
                next++;
            }
        }
        return out;
    }

    /**
     * Refuses horizon {@code index} when the model's response over it left the floating-point range:
     * an unstable (or mis-scaled) mode overflows the information, and no rank or error read off it
     * would mean anything.
     */
    static void requireFinite(double[] r, int index, double horizon) {
        if (!Matrices.allFinite(r)) {
            throw new ModelException("horizons[" + index + "]", "the model's response over " + ModelException.seconds(horizon)
                    + " leaves the floating-point range (beyond 1e308): a mode grows too fast (an unstable or mis-scaled a)"
                    + " for a window this long; plan shorter horizons, or check a and its time unit");
        }
    }

    /** The prediction from the square-root information factor R (n×n) of {@code equations} rows. */
    static Prediction predict(double[] r, int n, long equations, double horizon, long samples, double[] targets) {
        ConditioningAnalysis analysis = new ConditioningAnalysis(r, n, equations);
        Conditioning summary = analysis.summary(r, analysis.rank());
        double[] covariance = null;
        double[] se = null;
        if (analysis.rank() == n) {
            covariance = Triangular.timesOwnTranspose(Triangular.invertUpper(r, n), n);
            se = new double[n];
            for (int i = 0; i < n; i++) {
                se[i] = Math.sqrt(covariance[i * n + i]);
            }
        }
        return new Prediction(horizon, samples, equations, analysis.rank(), se, covariance,
                summary.information(), summary.conditionNumber(), summary.weakestDirection(), summary.weakestStd(),
                analysis.nullDirections(), meets(se, targets));
    }

    private static Boolean meets(double[] se, double[] targets) {
        if (targets == null) {
            return null;
        }
        if (se == null) {
            return false;
        }
        for (int i = 0; i < targets.length; i++) {
            if (!Double.isNaN(targets[i]) && !(se[i] <= targets[i])) {
                return false;
            }
        }
        return true;
    }

    /** The model seen through the outputs S only (inputs play no part in observability). */
    private static StateSpaceModel restricted(StateSpaceModel model, int[] outputs) {
        int n = model.states();
        double[] c = model.c();
        double[][] cs = new double[outputs.length][];
        for (int r = 0; r < outputs.length; r++) {
            cs[r] = Arrays.copyOfRange(c, outputs[r] * n, (outputs[r] + 1) * n);
        }
        double[][] a = Matrices.unflatten(model.a(), n, n);
        return model.isDiscrete()
                ? StateSpaceModel.discrete(a, null, cs, null, model.samplePeriod(), null)
                : StateSpaceModel.continuous(a, null, cs, null, null);
    }

    /** Checks the plan against the model before any work; returns the sample count of each horizon. */
    private static long[] validate(StateSpaceModel model, Plan plan) {
        double period = plan.samplePeriod();
        if (!(period > 0.0) || !Double.isFinite(period)) {
            throw new ModelException("samplePeriod", "got " + period + ", expected a finite number > 0");
        }
        if (model.isDiscrete()) {
            double steps = period / model.samplePeriod();
            if (Math.abs(steps - Math.rint(steps)) > WHOLE_PERIODS_TOLERANCE * Math.max(1.0, steps) || Math.rint(steps) < 1) {
                throw new ModelException("samplePeriod", "got " + period + ", expected a whole multiple of the model's "
                        + "sample period " + model.samplePeriod() + " s");
            }
        }
        double[] horizons = plan.horizons();
        if (horizons == null || horizons.length == 0) {
            throw new ModelException("horizons", "got none, expected at least one horizon");
        }
        for (int i = 0; i < horizons.length; i++) {
            if (!(horizons[i] >= 0.0) || !Double.isFinite(horizons[i])) {
                throw new ModelException("horizons[" + i + "]", "got " + horizons[i] + ", expected a finite number >= 0");
            }
            if (i > 0 && !(horizons[i] > horizons[i - 1])) {
                throw new ModelException("horizons[" + i + "]", "got " + horizons[i] + " after " + horizons[i - 1]
                        + ", expected strictly increasing horizons");
            }
        }
        int p = model.outputs();
        int[][] subsets = plan.outputSubsets();
        if (subsets == null || subsets.length == 0) {
            throw new ModelException("outputSubsets", "got none, expected at least one set of outputs");
        }
        requireLength("noiseSigma", plan.noiseSigma(), p);
        long measured = 0;
        for (int i = 0; i < subsets.length; i++) {
            measured += validateSubset(i, subsets[i], plan.noiseSigma(), p);
        }
        if (plan.targetStdErrors() != null) {
            requireLength("targetStdErrors", plan.targetStdErrors(), model.states());
            for (int i = 0; i < model.states(); i++) {
                double t = plan.targetStdErrors()[i];
                if (!Double.isNaN(t) && (!(t > 0.0) || Double.isInfinite(t))) {
                    throw new ModelException("targetStdErrors[" + i + "]", "got " + t + ", expected a finite number > 0");
                }
            }
        }
        double longestRatio = horizons[horizons.length - 1] / period;
        long longest = longestRatio < MAX_EQUATIONS ? samples(horizons[horizons.length - 1], period) : Long.MAX_VALUE;
        if (longest == Long.MAX_VALUE || longest * measured > MAX_EQUATIONS) {
            throw new ModelException("horizons", "got " + (longest == Long.MAX_VALUE ? "more than " + MAX_EQUATIONS : longest)
                    + " samples in the longest horizon × " + measured + " measured outputs over all subsets, expected at most "
                    + MAX_EQUATIONS + " equations: shorten the longest horizon, lengthen samplePeriod or ask for fewer outputs");
        }
        long[] samples = new long[horizons.length];
        for (int i = 0; i < horizons.length; i++) {
            samples[i] = samples(horizons[i], period);
        }
        if (model.processNoise() != null) {
            NoisePlanSweep.requireBounded(samples, subsets.length);
        }
        return samples;
    }

    /** Checks one subset; returns its size. */
    private static int validateSubset(int i, int[] subset, double[] sigma, int p) {
        if (subset == null || subset.length == 0) {
            throw new ModelException("outputSubsets[" + i + "]", "got none, expected at least one output");
        }
        boolean[] seen = new boolean[p];
        for (int j = 0; j < subset.length; j++) {
            int o = subset[j];
            String field = "outputSubsets[" + i + "][" + j + "]";
            if (o < 0 || o >= p) {
                throw new ModelException(field, "got output " + o + ", expected 0.." + (p - 1));
            }
            if (seen[o]) {
                throw new ModelException(field, "got output " + o + " twice, expected distinct outputs");
            }
            seen[o] = true;
            double s = sigma[o];
            if (!(s > 0.0) || Double.isInfinite(s)) {
                throw new ModelException("noiseSigma[" + o + "]", "got " + s + ", expected a finite number > 0");
            }
        }
        return subset.length;
    }

    private static void requireLength(String field, double[] values, int expected) {
        if (values == null || values.length != expected) {
            throw new ModelException(field, "got " + (values == null ? "none" : Counted.of(values.length, "value"))
                    + ", expected " + expected);
        }
    }
}
