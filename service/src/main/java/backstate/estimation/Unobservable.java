package backstate.estimation;

import java.util.List;

/**
 * The data do not determine every unknown: the information matrix is rank-deficient and no
 * prior makes the problem well posed.
 *
 * @param directions     unit vectors spanning the unobservable subspace (over the unknowns: x0 then offsets)
 * @param singularValues singular values of the square-root information factor, descending
 * @param rankTolerance  singular values at or below this count as zero
 * @param unknownNames   name of each unknown ({@code x0[i]}, {@code offset[j]}) in vector order
 */
public record Unobservable(List<double[]> directions, double[] singularValues, double rankTolerance,
                           List<String> unknownNames) implements EstimationResult {
}
