package backstate.estimation;

import backstate.text.Counted;
import java.util.EnumSet;
import java.util.List;
import java.util.Set;
import java.util.function.IntToDoubleFunction;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.apache.commons.math3.distribution.TDistribution;

/**
 * Weighted least-squares back-estimate of a unit's initial state x0 (and optional constant sensor
 * offsets) from one output trace, after removing the known-input forced response.
 *
 * <p>Method: sequential Householder QR in square-root information form (Lawson &amp; Hanson 1974,
 * ch. 27; Bierman 1977, Factorization Methods for Discrete Sequential Estimation, ch. V), so the
 * information matrix W (the weighted observability Gramian) is neither formed to be inverted nor
 * backed by the stacked N×q matrix. The estimate solves R θ = z; its covariance is R⁻¹R⁻ᵀ.
 */
public final class InitialStateEstimator {
    /** Two-sided confidence level of the reported intervals. */
    public static final double CONFIDENCE = 0.95;
    /** Accuracy of the Student-t quantile; Commons Math's default 1e-9 would show in the interval's 10th digit. */
    static final double INVERSE_ACCURACY = 1e-14;

    private InitialStateEstimator() {
    }

    /** Solves one trace; shape errors throw {@link ModelException}, unobservability is returned as a value. */
    public static EstimationResult solve(StateSpaceModel model, Trace trace, EstimationOptions options) {
        if (options.formulation() == Formulation.PROCESS_NOISE) {
            return ProcessNoiseSmoother.solve(model, trace, options);
        }
        long evenStep = validatedStep(model, trace, options);
        SolveContext ctx = new SolveContext(model, trace, options, evenStep);
        EquationPass.Result pass = ChunkedEquations.run(ctx);
        WeightedFactors data = pass.factors();
        SquareRootInformation dataInfo = data.estimate;
        requireFinite(dataInfo.factorR(), dataInfo.rhs(), data.weighted() ? data.perSample.residualSquares() : 0.0,
                trace);
        ConditioningAnalysis dataOnly = new ConditioningAnalysis(dataInfo.factorR(), ctx.q, dataInfo.equations());
        if (options.prior() == null) {
            return dataOnly.rank() < ctx.q ? unobservable(ctx, dataOnly) : finish(ctx, pass, data, dataOnly, dataOnly);
        }
        WeightedFactors withPrior = data.copy();
        withPrior.addPrior(options.prior(), ctx.n);
        SquareRootInformation info = withPrior.estimate;
        ConditioningAnalysis full = new ConditioningAnalysis(info.factorR(), ctx.q, info.equations());
        return full.rank() < ctx.q ? unobservable(ctx, full) : finish(ctx, pass, withPrior, full, dataOnly);
    }

    /** Checks that a model, trace and options fit together, throwing {@link ModelException} before any work. */
    public static void validate(StateSpaceModel model, Trace trace, EstimationOptions options) {
        validatedStep(model, trace, options);
    }

    /**
     * {@link #validate(StateSpaceModel, Trace, EstimationOptions)} for a trace known by its times and
     * channel counts before its samples are assembled (the intake checks a large upload this way and
     * stores it column by column); its samples must pass {@link Trace}'s own checks.
     */
    public static void validate(StateSpaceModel model, double[] times, int outputs, int inputs,
                                IntToDoubleFunction traceSigma, EstimationOptions options) {
        validatedStep(model, times, outputs, inputs, traceSigma, options);
    }

    /**
     * As {@link #validate}, and returns the one step (in step units) between every two consecutive
     * samples, or {@link SolveContext#UNEVEN} when steps differ or there is a single sample.
     */
    static long validatedStep(StateSpaceModel model, Trace trace, EstimationOptions options) {
        return validatedStep(model, trace.timesView(), trace.outputCount(), trace.inputCount(), trace::noiseSigma, options);
    }

    private static long validatedStep(StateSpaceModel model, double[] times, int outputs, int inputs,
                                      IntToDoubleFunction traceSigma, EstimationOptions options) {
        Trace.requireSamples(times.length);
        requireCompatible(model, times, outputs, inputs, options);
        NoiseLevels.requireGivenWithStatedCovariance(model, traceSigma, options);
        SampleSteps steps = new SampleSteps(model, times[0]);
        requireReferenceOnGrid(steps, options);
        long reference = smoothedReference(model, steps, options);
        StepScan scan = StepScan.of(model, steps, times, reference);
        if (reference >= 0 && !scan.foundUnits()) {
            throw ModelException.ofTime("referenceTime", options.referenceTime(), "the time of a sample: with"
                    + " process noise the smoothed state is computed at sample times");
        }
        return scan.even() ? scan.step() : SolveContext.UNEVEN;
    }

    /**
     * For the process-noise formulation, which needs a model with process noise: the reference
     * time's step units, which must be a sample's; −1 otherwise.
     */
    private static long smoothedReference(StateSpaceModel model, SampleSteps steps, EstimationOptions options) {
        if (options.formulation() != Formulation.PROCESS_NOISE) {
            return -1;
        }
        if (model.processNoise() == null) {
            throw new ModelException("formulation", "got process_noise, expected a model that declares processNoise");
        }
        return options.referenceTime() == null ? -1 : steps.unitsFromStart(options.referenceTime(), "referenceTime");
    }

    /** A reference time a discrete model's state exists at: on its grid (checked here, before any work, not at solve). */
    private static void requireReferenceOnGrid(SampleSteps steps, EstimationOptions options) {
        if (options.referenceTime() != null) {
            steps.unitsFromStart(options.referenceTime(), "referenceTime");
        }
    }

    /**
     * Scaling cannot rescue a model whose response leaves the double range within the trace (an
     * unstable mode e^(λt) beyond 1e308, e.g. a = 1e3/s over 60 s): the equations hold infinities,
     * and a rank decision on them would report directions that do not exist. It is refused in words
     * instead, as the model and trace not fitting together (ModelException), not retried.
     */
    static void requireFinite(double[] r, double[] z, double residualSquares, Trace trace) {
        if (!Matrices.allFinite(r) || !Matrices.allFinite(z) || !Double.isFinite(residualSquares)) {
            // Times are kept to the microsecond: the span in whole microseconds, plain ("0.000001 s", not "9.5E-7 s").
            double window = Math.round((trace.time(trace.samples() - 1) - trace.time(0)) * 1e6) / 1e6;
            throw new ModelException("a", "the model's response over this trace's " + ModelException.seconds(window) + " leaves the"
                    + " floating-point range (beyond 1e308): a mode grows too fast (an unstable or mis-scaled a)"
                    + " for a window this long; check a and its time unit, or send a shorter trace");
        }
    }

    /** True when {@code time} lies in the window [t_0, t_N−1] of these (validated, ascending) sample times. */
    private static boolean insideWindow(double time, double[] times) {
        return time >= times[0] && time <= times[times.length - 1];
    }

    static Unobservable unobservable(SolveContext ctx, ConditioningAnalysis analysis) {
        return new Unobservable(analysis.nullDirections(), analysis.singularValues(), analysis.tolerance(),
                ctx.unknownNames());
    }

    private static Estimate finish(SolveContext ctx, EquationPass.Result pass, WeightedFactors factors,
                                   ConditioningAnalysis analysis, ConditioningAnalysis dataOnly) {
        int q = ctx.q;
        SquareRootInformation info = factors.estimate;
        double[] r = info.factorR();
        double[] solution = Triangular.solveUpper(r, info.rhs(), q);
        double[] rInverse = Triangular.invertUpper(r, q);
        double[] covariance = factors.weighted()
                ? Sandwich.covariance(rInverse, factors.spread.factorR(), q)
                : Triangular.timesOwnTranspose(rInverse, q);
        ResidualPass.Result residuals = ResidualPass.run(ctx, solution, pass.presentCounts(), pass.join());
        double chiSquare = chiSquare(ctx, factors, residuals, solution);
        requireFinite(r, info.rhs(), chiSquare, ctx.trace); // the sampled χ² comes from the residual pass, checked here
        int dof = (int) (factors.perSample.equations() - q);
        double sigmaScale = dof > 0 ? Math.sqrt(chiSquare / dof) : Double.NaN;
        double[] se = diagonalRoots(covariance, q, 1.0);
        double[] seScaled = diagonalRoots(covariance, q, sigmaScale);
        double chiSquareP = LjungBox.chiSquareUpperTail(chiSquare, dof);
        Conditioning conditioning = analysis.summary(r, dataOnly.rank());
        if (factors.weighted()) {
            conditioning = Sandwich.withWeakestSpread(conditioning, covariance, q);
        }
        Set<Flag> flags = flags(ctx, conditioning, residuals.channels(), chiSquareP, dof);
        if (OffsetSeparation.worstInflation(r, rInverse, ctx.n, q) > Conditioning.OFFSET_INFLATION_LIMIT) {
            flags.add(Flag.OFFSET_CONFOUNDED);
        }
        StateUncertainty.Rule rule = intervalRule(ctx, sigmaScale, dof);
        double[][] interval = intervals(solution, se, rule);
        double[] pxx = Matrices.block(covariance, q, 0, 0, ctx.n, ctx.n);
        Estimate.Series series = residuals.series() == null ? null
                : StateUncertainty.series(ctx, residuals.series(), pxx, rule);
        return new Estimate(ctx.unknownNames(), solution, covariance, se, sigmaScale, seScaled,
                interval[0], interval[1], reference(ctx, residuals.referenceState(), pxx, rule),
                windowEnd(ctx, residuals.endState(), pxx, rule), conditioning,
                residuals.channels(), chiSquare, dof, chiSquareP, flags, series);
    }

    /**
     * The per-sample fit's residual sum of squares. Sampled: the whitened residuals of the residual
     * pass at θ̂, plus the prior's pseudo-equations at θ̂ — the least-squares residual itself, which
     * the block route does not split off ({@link BlockProjection}). Continuous: the per-sample fit
     * is a fit of its own, whose residual its factor accumulated.
     */
    private static double chiSquare(SolveContext ctx, WeightedFactors factors, ResidualPass.Result residuals,
                                    double[] solution) {
        if (factors.weighted()) {
            return factors.perSample.residualSquares();
        }
        Prior prior = ctx.options.prior();
        return residuals.whitenedSquares() + (prior == null ? 0.0 : PriorEquations.residualSquares(prior, ctx.n, solution));
    }

    static double[] diagonalRoots(double[] covariance, int q, double scale) {
        double[] out = new double[q];
        for (int i = 0; i < q; i++) {
            out[i] = scale * Math.sqrt(covariance[i * q + i]);
        }
        return out;
    }

    /**
     * Normal quantiles when every σ was given; Student-t with dof when σ is estimated from the
     * residuals; none (NaN, written null) when σ is not given and no residual is left to estimate
     * it from, since the assumed σ = 1 would make the interval's width a matter of the output's unit.
     */
    static StateUncertainty.Rule intervalRule(SolveContext ctx, double sigmaScale, int dof) {
        double tail = 0.5 + CONFIDENCE / 2.0;
        if (!ctx.noise.allGiven()) {
            double t = dof > 0 ? new TDistribution(null, dof, INVERSE_ACCURACY).inverseCumulativeProbability(tail) : Double.NaN;
            return new StateUncertainty.Rule(t, true, sigmaScale);
        }
        double z = new NormalDistribution(null, 0.0, 1.0).inverseCumulativeProbability(tail);
        return new StateUncertainty.Rule(z, false, sigmaScale);
    }

    static double[][] intervals(double[] x, double[] se, StateUncertainty.Rule rule) {
        double[][] out = new double[2][x.length];
        for (int i = 0; i < x.length; i++) {
            out[0][i] = x[i] - rule.halfWidth(se[i]);
            out[1][i] = x[i] + rule.halfWidth(se[i]);
        }
        return out;
    }

    private static Estimate.StateAt reference(SolveContext ctx, double[] state, double[] pxx,
                                              StateUncertainty.Rule rule) {
        if (state == null) {
            return null;
        }
        double time = ctx.options.referenceTime();
        long units = ctx.steps.unitsFromStart(time, "referenceTime");
        return StateUncertainty.at(time, state, transitionFromStart(ctx, units), pxx, ctx.n, rule);
    }

    /** The state at the window's last sample. */
    private static Estimate.StateAt windowEnd(SolveContext ctx, double[] state, double[] pxx,
                                              StateUncertainty.Rule rule) {
        int last = ctx.trace.samples() - 1;
        return StateUncertainty.at(ctx.trace.time(last), state, transitionFromStart(ctx, ctx.units(last)), pxx,
                ctx.n, rule);
    }

    private static double[] transitionFromStart(SolveContext ctx, long units) {
        return units == 0 ? Matrices.identity(ctx.n) : ctx.transitions.fresh(units).transition();
    }

    static Set<Flag> flags(SolveContext ctx, Conditioning conditioning, List<ChannelDiagnostics> channels,
                                   double chiSquareP, int dof) {
        Set<Flag> flags = EnumSet.noneOf(Flag.class);
        if (conditioning.dataRank() < ctx.q) {
            flags.add(Flag.UNOBSERVABLE);
        }
        if (conditioning.conditionNumber() > Conditioning.ILL_CONDITIONED_LIMIT) {
            flags.add(Flag.ILL_CONDITIONED);
        }
        if (dof < Conditioning.FEW_SAMPLES_DOF) {
            flags.add(Flag.FEW_SAMPLES);
        }
        if (mismatch(ctx, channels, chiSquareP)) {
            flags.add(Flag.MODEL_MISMATCH);
        }
        return flags;
    }

    /** χ² test when every σ is known, plus each channel's whiteness test at level/p (Bonferroni). */
    private static boolean mismatch(SolveContext ctx, List<ChannelDiagnostics> channels, double chiSquareP) {
        double level = ctx.options.mismatchLevel();
        if (ctx.noise.allGiven() && chiSquareP < level) {
            return true;
        }
        for (ChannelDiagnostics channel : channels) {
            if (channel.ljungBoxP() < level / channels.size()) {
                return true;
            }
        }
        return false;
    }

    private static void requireCompatible(StateSpaceModel model, double[] times, int outputs, int inputs,
                                          EstimationOptions options) {
        if (outputs != model.outputs()) {
            throw new ModelException("outputs", "got " + Counted.of(outputs, "channel") + ", expected "
                    + model.outputs() + " (the model's outputs)");
        }
        if (inputs != model.inputs()) {
            throw new ModelException("inputs", "got " + Counted.of(inputs, "channel") + ", expected "
                    + model.inputs() + " (the model's inputs)");
        }
        if (!(options.mismatchLevel() > 0.0 && options.mismatchLevel() < 1.0)) {
            throw new ModelException("mismatchLevel", "got " + options.mismatchLevel() + ", expected 0 < level < 1");
        }
        Double t = options.referenceTime();
        if (t != null && !insideWindow(t, times)) {
            throw ModelException.ofTime("referenceTime", t, "a time inside the window %s to %s", times[0],
                    times[times.length - 1]);
        }
        if (options.prior() != null) {
            PriorEquations.validate(options.prior(), model.states());
        }
    }
}
