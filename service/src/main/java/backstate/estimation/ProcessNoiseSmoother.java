package backstate.estimation;

import java.util.List;
import java.util.Set;

/**
 * Back-estimate of x0, and of the state trajectory, for a model disturbed between samples by the
 * process noise it declares ({@link StateSpaceModel#processNoise()}): the maximum a posteriori
 * estimate given the whole window, the minimiser of
 * <pre>
 *   Σ_k Σ_j (y_kj − C_j x_k − D_j u_k − o_j)²/σ_j² + Σ_k ‖ξ_k‖² + prior misfit,
 *   x_{k+1} = Φ_k x_k + Γ_k u_k + G_k ξ_k,  G_k G_kᵀ = Q_d(t_{k+1} − t_k),
 * </pre>
 * over x_0 … x_{N−1}, the ξ_k and the offsets o.
 *
 * <p>Method: a fixed-interval smoother in square-root information form (Bierman 1977, Factorization
 * Methods for Discrete Sequential Estimation, ch. VI and X): a square-root information filter run
 * from the last sample back to the first ({@link BackwardSweep}) gives the information about x0 from
 * every sample, to which the prior is added; x̂0 solves R0 x0 = z0 and its covariance is R0⁻¹R0⁻ᵀ.
 * When a series or a reference state before the last sample is asked, {@link SmoothedTrajectory}
 * then sweeps forward from x̂0 for them and the window-end state, holding O(N/1024·s²) numbers beside
 * the series and about tripling the cost. Otherwise the window-end state comes from
 * {@link WindowEndFilter}, a forward filter whose last estimate is the smoothed one, in O(s²) numbers
 * whatever N and about 2.5 times the cost of x̂0 alone (the smoother's route is kept when a transition is too
 * ill-conditioned for it); {@link #solveInitialState} skips both. Cost O(N) in every case.
 * Q_d is never inverted, so noise on some states only (a singular Q_d) needs nothing special; with
 * zero process noise every step is the deterministic transition and the estimate is the sampled one.
 *
 * <p>σ̂ and Student-t intervals follow the sampled formulation's rule when some σ is not given;
 * scaling by σ̂ then scales the process noise alike. χ² is the minimised cost above (including the
 * noise terms); its degrees of freedom are the data and prior equations minus the unknowns of x0.
 */
public final class ProcessNoiseSmoother {
    private ProcessNoiseSmoother() {
    }

    /**
     * Solves one trace with its window-end state (and the reference state and series when asked):
     * memory independent of N unless a series or a reference state before the last sample is asked
     * and, with those, the smoother's forward sweep; shape errors throw {@link ModelException},
     * unobservability is returned as a value.
     */
    public static EstimationResult solve(StateSpaceModel model, Trace trace, EstimationOptions options) {
        return solve(model, trace, options, true);
    }

    /**
     * x̂0 alone, in memory independent of N: the backward sweep only, so the estimate has no
     * window-end or reference state and no series (the options' keepSeries and referenceTime are
     * ignored). For batch work that reads x0 only, such as regression runs.
     */
    public static EstimationResult solveInitialState(StateSpaceModel model, Trace trace, EstimationOptions options) {
        return solve(model, trace, options.withKeepSeries(false).withReferenceTime(null), false);
    }

    private static EstimationResult solve(StateSpaceModel model, Trace trace, EstimationOptions options,
                                          boolean windowEnd) {
        InitialStateEstimator.validate(model, trace, options);
        SolveContext ctx = new SolveContext(model, trace, options);
        int referenceSample = referenceSample(ctx);
        NoiseSteps noise = new NoiseSteps(ctx);
        long[] present = presentCounts(ctx);
        InnovationSums innovations = new InnovationSums(ctx, present);
        int samples = trace.samples();
        WindowEndFilter.End end = windowEnd && filterSuffices(ctx, referenceSample) ? filteredEnd(ctx, noise) : null;
        boolean trajectory = windowEnd && end == null;
        double[][] checkpoints = trajectory ? new double[SmoothedTrajectory.checkpointCount(samples)][] : null;
        BackwardSweep sweep = new BackwardSweep(ctx, noise);
        for (int k = samples - 1; k >= 0; k--) {
            if (k < samples - 1) {
                sweep.stepBack(k, null, 0);
            }
            sweep.measure(k, innovations);
            if (trajectory && SmoothedTrajectory.checkpointOf(k, samples) >= 0) {
                checkpoints[SmoothedTrajectory.checkpointOf(k, samples)] = sweep.info().clone();
            }
        }
        int q = ctx.q;
        double[] dataR = factorOf(sweep.info(), q);
        InitialStateEstimator.requireFinite(dataR, rhsOf(sweep.info(), q), sweep.residualSquares(), trace);
        ConditioningAnalysis dataOnly = new ConditioningAnalysis(dataR, q, sweep.equations());
        int priorRows = 0;
        if (options.prior() != null) {
            priorRows = model.states();
            sweep.foldRows(priorRows(options.prior(), q), q);
        }
        double[] r = factorOf(sweep.info(), q);
        ConditioningAnalysis full = options.prior() == null ? dataOnly
                : new ConditioningAnalysis(r, q, sweep.equations() + priorRows);
        if (full.rank() < q) {
            return InitialStateEstimator.unobservable(ctx, full);
        }
        Solved solved = new Solved(ctx, r, rhsOf(sweep.info(), q), sweep.residualSquares(),
                sweep.equations() + priorRows, innovations);
        return solved.estimate(full, dataOnly, trajectory ? checkpoints : null, noise, referenceSample, end);
    }

    /** True when no series is kept and the reference sample, if any, is the last: the forward filter gives all that is asked. */
    private static boolean filterSuffices(SolveContext ctx, int referenceSample) {
        return !ctx.options.keepSeries() && (referenceSample < 0 || referenceSample == ctx.trace.samples() - 1);
    }

    /** The window-end state by {@link WindowEndFilter}, with the prior at x0 when there is one; null when it declines. */
    private static WindowEndFilter.End filteredEnd(SolveContext ctx, NoiseSteps noise) {
        Prior prior = ctx.options.prior();
        return prior == null ? WindowEndFilter.run(ctx, noise, null, 0)
                : WindowEndFilter.run(ctx, noise, priorRows(prior, ctx.q), ctx.q);
    }

    /** The prior's whitened rows [L⁻¹ | L⁻¹μ] over the q unknowns (zeros on the offsets). */
    private static double[] priorRows(Prior prior, int q) {
        SquareRootInformation info = new SquareRootInformation(q);
        PriorEquations.add(info, prior, prior.mean().length);
        double[] r = info.factorR();
        double[] z = info.rhs();
        double[] rows = new double[q * (q + 1)];
        for (int i = 0; i < q; i++) {
            System.arraycopy(r, i * q, rows, i * (q + 1), q);
            rows[i * (q + 1) + q] = z[i];
        }
        return rows;
    }

    private static long[] presentCounts(SolveContext ctx) {
        long[] counts = new long[ctx.p];
        for (int k = 0; k < ctx.trace.samples(); k++) {
            for (int j = 0; j < ctx.p; j++) {
                if (!Double.isNaN(ctx.trace.output(k, j))) {
                    counts[j]++;
                }
            }
        }
        return counts;
    }

    /** The sample at the options' reference time ({@link InitialStateEstimator#validate} made sure there is one); −1 when none is asked. */
    private static int referenceSample(SolveContext ctx) {
        Double t = ctx.options.referenceTime();
        if (t == null) {
            return -1;
        }
        long units = ctx.steps.unitsFromStart(t, "referenceTime");
        int lo = 0;
        int hi = ctx.trace.samples() - 1;
        while (lo < hi) {
            int mid = (lo + hi) >>> 1;
            if (ctx.units(mid) < units) {
                lo = mid + 1;
            } else {
                hi = mid;
            }
        }
        return lo;
    }

    static double[] factorOf(double[] info, int q) {
        double[] r = new double[q * q];
        for (int i = 0; i < q; i++) {
            System.arraycopy(info, i * (q + 1), r, i * q, q);
        }
        return r;
    }

    static double[] rhsOf(double[] info, int q) {
        double[] z = new double[q];
        for (int i = 0; i < q; i++) {
            z[i] = info[i * (q + 1) + q];
        }
        return z;
    }

    /** The solved information about x0 and what the estimate is built from. */
    private record Solved(SolveContext ctx, double[] r, double[] z, double chiSquare, long equations,
                          InnovationSums innovations) {
        Estimate estimate(ConditioningAnalysis analysis, ConditioningAnalysis dataOnly, double[][] checkpoints,
                          NoiseSteps noise, int referenceSample, WindowEndFilter.End end) {
            int q = ctx.q;
            double[] solution = Triangular.solveUpper(r, z, q);
            double[] rInverse = Triangular.invertUpper(r, q);
            double[] covariance = Triangular.timesOwnTranspose(rInverse, q);
            int dof = (int) (equations - q);
            double sigmaScale = dof > 0 ? Math.sqrt(chiSquare / dof) : Double.NaN;
            double[] se = InitialStateEstimator.diagonalRoots(covariance, q, 1.0);
            double[] seScaled = InitialStateEstimator.diagonalRoots(covariance, q, sigmaScale);
            double chiSquareP = LjungBox.chiSquareUpperTail(chiSquare, dof);
            Conditioning conditioning = analysis.summary(r, dataOnly.rank());
            List<ChannelDiagnostics> channels = innovations.diagnostics();
            Set<Flag> flags = InitialStateEstimator.flags(ctx, conditioning, channels, chiSquareP, dof);
            if (OffsetSeparation.worstInflation(r, rInverse, ctx.n, q) > Conditioning.OFFSET_INFLATION_LIMIT) {
                flags.add(Flag.OFFSET_CONFOUNDED);
            }
            StateUncertainty.Rule rule = InitialStateEstimator.intervalRule(ctx, sigmaScale, dof);
            double[][] interval = InitialStateEstimator.intervals(solution, se, rule);
            TrajectoryOutput out = checkpoints == null ? null
                    : TrajectoryOutput.run(ctx, noise, solution, rInverse, checkpoints, rule, referenceSample);
            Estimate.StateAt windowEnd = out != null ? out.windowEnd() : end == null ? null
                    : TrajectoryOutput.stateAt(ctx, rule, ctx.trace.samples() - 1, end.state(), end.root());
            Estimate.StateAt reference = out != null ? out.reference() : referenceSample < 0 ? null : windowEnd;
            return new Estimate(ctx.unknownNames(), solution, covariance, se, sigmaScale, seScaled, interval[0],
                    interval[1], reference, windowEnd, conditioning, channels, chiSquare, dof, chiSquareP, flags,
                    out == null ? null : out.series(), innovations.statistics(channels));
        }
    }
}
