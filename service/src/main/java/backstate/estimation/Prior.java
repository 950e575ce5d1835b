package backstate.estimation;

/**
 * A Gaussian prior on the initial state: mean (n) and covariance (n×n row-major, symmetric
 * positive definite). It adds n pseudo-observations and regularises weakly observed directions.
 */
public record Prior(double[] mean, double[] covariance) {
}
