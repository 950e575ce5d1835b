package backstate.estimation;

/**
 * Uncertainty of the estimated state at times of the window. With no process noise the state at t
 * is x̂(t) = Φ(t − t0) x̂0 + forced response, and the forced response is known, so
 * Cov x̂(t) = Φ P Φᵀ with P the covariance of x̂0 (linear propagation of covariance, e.g. Simon
 * 2006, Optimal State Estimation, §4.1 — from memory). Intervals follow the rule of x̂0's
 * ({@link Rule}).
 */
final class StateUncertainty {
    private StateUncertainty() {
    }

    /** Normal quantile × standard error, or Student-t quantile × standard error scaled by σ̂. */
    record Rule(double quantile, boolean scaled, double sigmaScale) {
        double halfWidth(double standardError) {
            return quantile * (scaled ? sigmaScale * standardError : standardError);
        }
    }

    /** The state at {@code time} with covariance Φ P Φᵀ (symmetrised), standard errors and intervals. */
    static Estimate.StateAt at(double time, double[] state, double[] phi, double[] pxx, int n, Rule rule) {
        double[] cov = Matrices.multiply(Matrices.multiply(phi, pxx, n, n, n), Matrices.transpose(phi, n, n), n, n, n);
        for (int i = 0; i < n; i++) {
            for (int j = i + 1; j < n; j++) {
                double mean = 0.5 * (cov[i * n + j] + cov[j * n + i]);
                cov[i * n + j] = mean;
                cov[j * n + i] = mean;
            }
        }
        double[] se = new double[n];
        double[] seScaled = new double[n];
        double[] lower = new double[n];
        double[] upper = new double[n];
        for (int i = 0; i < n; i++) {
            se[i] = Math.sqrt(cov[i * n + i]);
            seScaled[i] = rule.sigmaScale() * se[i];
            lower[i] = state[i] - rule.halfWidth(se[i]);
            upper[i] = state[i] + rule.halfWidth(se[i]);
        }
        return new Estimate.StateAt(time, state, cov, se, seScaled, lower, upper);
    }

    /**
     * The kept series with the state trajectory's standard errors and band: Φ(t_k − t0) is carried
     * from kept sample to kept sample by one product with the transition over the gap between them.
     */
    static Estimate.Series series(SolveContext ctx, ResidualPass.Kept kept, double[] pxx, Rule rule) {
        int n = ctx.n;
        int points = kept.times().length;
        double[] se = new double[points * n];
        double[] lower = new double[points * n];
        double[] upper = new double[points * n];
        double[] phi = Matrices.identity(n);
        double[] next = new double[n * n];
        double[] phiP = new double[n * n];
        long previousUnits = ctx.units(0);
        for (int i = 0; i < points; i++) {
            long units = ctx.units(kept.samples().sample(i));
            if (units != previousUnits) {
                Matrices.multiplyInto(ctx.transitions.over(units - previousUnits).transition(), phi, n, n, n, next);
                double[] swap = phi;
                phi = next;
                next = swap;
                previousUnits = units;
            }
            Matrices.multiplyInto(phi, pxx, n, n, n, phiP);
            for (int r = 0; r < n; r++) {
                double variance = 0.0;
                for (int c = 0; c < n; c++) {
                    variance += phiP[r * n + c] * phi[r * n + c];
                }
                int at = i * n + r;
                se[at] = Math.sqrt(Math.max(variance, 0.0));
                double half = rule.halfWidth(se[at]);
                lower[at] = kept.states()[at] - half;
                upper[at] = kept.states()[at] + half;
            }
        }
        return new Estimate.Series(kept.times(), kept.measured(), kept.fitted(), kept.residuals(), ctx.p,
                kept.states(), se, lower, upper, n, ctx.options.seriesStride());
    }
}
