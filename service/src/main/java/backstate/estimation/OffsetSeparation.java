package backstate.estimation;

/**
 * How well each estimated sensor offset is told apart from the other unknowns: its variance
 * inflation factor VIF_j = (W⁻¹)_jj · W_jj = 1 / (1 − R_j²), R_j² the squared multiple correlation
 * of unknown j with all others under the information matrix W = RᵀR (Belsley, Kuh &amp; Welsch 1980,
 * Regression Diagnostics, ch. 3 — from memory). Read off the triangular factor: W_jj is the squared
 * norm of column j of R, (W⁻¹)_jj the squared norm of row j of R⁻¹; W is never formed or inverted.
 */
final class OffsetSeparation {
    private OffsetSeparation() {
    }

    /** The largest VIF over the offsets (unknowns n … q−1), given R and R⁻¹; 1 when there are none. */
    static double worstInflation(double[] r, double[] inverse, int n, int q) {
        double worst = 1.0;
        for (int j = n; j < q; j++) {
            double column = 0.0;
            double row = 0.0;
            for (int k = 0; k < q; k++) {
                column += r[k * q + j] * r[k * q + j];
                row += inverse[j * q + k] * inverse[j * q + k];
            }
            worst = Math.max(worst, column * row);
        }
        return worst;
    }
}
