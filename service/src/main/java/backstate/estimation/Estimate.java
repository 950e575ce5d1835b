package backstate.estimation;

import java.util.List;
import java.util.Set;

/**
 * A solved back-estimate. Vectors over the unknowns are ordered x0 (n) then offsets (p, when
 * estimated); matrices are row-major.
 *
 * @param unknownNames         name of each unknown in vector order
 * @param solution             estimated unknowns (x̂0, then offsets)
 * @param covariance           covariance of the unknowns with the given/assumed σ (q×q); for the
 *                             continuous formulation the sandwich form under per-sample noise
 * @param standardErrors       square roots of the covariance diagonal
 * @param sigmaScale           σ̂ = sqrt(χ²/dof), the factor the residuals suggest for σ (NaN when dof = 0)
 * @param standardErrorsScaled standard errors scaled by σ̂
 * @param intervalLower        lower ends of the 95 % confidence intervals
 * @param intervalUpper        upper ends of the 95 % confidence intervals
 * @param reference            the state at the options' reference time, or null
 * @param windowEnd            the state at the window's last sample
 * @param conditioning         information matrix, eigen-structure and rank
 * @param channels             residual diagnostics per output channel
 * @param chiSquare            residual sum of squares weighted by 1/σ² at the best per-sample fit
 *                             (prior misfit included); the estimate's own for the sampled formulation
 * @param degreesOfFreedom     equations (data plus prior) minus unknowns
 * @param chiSquareP           upper-tail p-value of χ² (NaN when dof = 0)
 * @param flags                conditions for dashboards
 * @param series               measured, fitted and residual outputs and the state trajectory, or null when not kept
 * @param innovations          per channel, the normalised innovations' statistics (process-noise formulation
 *                             only; null otherwise)
 */
public record Estimate(List<String> unknownNames, double[] solution, double[] covariance, double[] standardErrors,
                       double sigmaScale, double[] standardErrorsScaled, double[] intervalLower,
                       double[] intervalUpper, StateAt reference, StateAt windowEnd, Conditioning conditioning,
                       List<ChannelDiagnostics> channels, double chiSquare, int degreesOfFreedom,
                       double chiSquareP, Set<Flag> flags, Series series,
                       List<InnovationStatistics> innovations) implements EstimationResult {

    /** An estimate without innovation statistics (the sampled and continuous formulations). */
    public Estimate(List<String> unknownNames, double[] solution, double[] covariance, double[] standardErrors,
                    double sigmaScale, double[] standardErrorsScaled, double[] intervalLower,
                    double[] intervalUpper, StateAt reference, StateAt windowEnd, Conditioning conditioning,
                    List<ChannelDiagnostics> channels, double chiSquare, int degreesOfFreedom,
                    double chiSquareP, Set<Flag> flags, Series series) {
        this(unknownNames, solution, covariance, standardErrors, sigmaScale, standardErrorsScaled, intervalLower,
                intervalUpper, reference, windowEnd, conditioning, channels, chiSquare, degreesOfFreedom, chiSquareP,
                flags, series, null);
    }

    /**
     * The state at a time t of the window: x̂(t) = Φ(t) x̂0 + forced response, covariance Φ P Φᵀ
     * (P the states' block of the estimate's covariance), standard errors, standard errors scaled
     * by σ̂, and 95 % intervals by the same rule as x̂0's.
     */
    public record StateAt(double time, double[] state, double[] covariance, double[] standardErrors,
                          double[] standardErrorsScaled, double[] lower, double[] upper) {
    }

    /**
     * Per kept sample (every {@code stride}-th, row-major): measured outputs (NaN where missing),
     * fitted outputs and residuals (kept×p), and the estimated state x̂(t_k) with its standard
     * errors and 95 % band (kept×n).
     */
    public record Series(double[] times, double[] measured, double[] fitted, double[] residuals, int outputCount,
                         double[] states, double[] stateStandardErrors, double[] stateLower, double[] stateUpper,
                         int stateCount, int stride) {
    }

    /** The estimated initial state x̂0 (first n unknowns). */
    public double[] initialState(int states) {
        return java.util.Arrays.copyOf(solution, states);
    }
}
