package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.apache.commons.math3.linear.MatrixUtils;
import org.apache.commons.math3.linear.QRDecomposition;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * One decaying state seen with a sensor offset: y(t) = e^{−a t} x0 + o. With two unknowns the
 * variance inflation factor has the closed form VIF = 1 / (1 − cos²θ), θ the angle between the
 * regressor columns f(t) = e^{−a t} and 1 (Belsley, Kuh &amp; Welsch 1980 — from memory; for two
 * columns it follows from the 2×2 inverse). A slow decay over the window makes f nearly constant,
 * so the state and the offset cannot be told apart.
 */
class OffsetSeparationTest {
    private static final int SAMPLES = 101;
    private static final double STEP = 1.0;

    @ParameterizedTest
    @CsvSource({"0.0001, true", "0.05, false"})
    void offset_of_a_slowly_decaying_state_is_flagged_confounded(double decay, boolean confounded) {
        double[][] columns = new double[SAMPLES][2];
        double dot = 0.0;
        double ff = 0.0;
        for (int k = 0; k < SAMPLES; k++) {
            double f = Math.exp(-decay * k * STEP);
            columns[k][0] = f;
            columns[k][1] = 1.0;
            dot += f;
            ff += f * f;
        }
        double cosine2 = dot * dot / (ff * SAMPLES);
        double closedForm = 1.0 / (1.0 - cosine2);
        // R from Commons Math's Householder QR of the stacked columns, as an independent factor.
        double[][] r = new QRDecomposition(MatrixUtils.createRealMatrix(columns)).getR().getSubMatrix(0, 1, 0, 1).getData();
        double[] factor = Matrices.flatten(r, 2, 2);
        double inflation = OffsetSeparation.worstInflation(factor, Triangular.invertUpper(factor, 2), 1, 2);
        // Relative accuracy: cancellation in 1 − cos² costs ~VIF·ε (common practice, no source).
        assertEquals(closedForm, inflation, 1e-12 * closedForm * closedForm, "VIF vs 1/(1 − cos²θ)");
        assertEquals(confounded, inflation > Conditioning.OFFSET_INFLATION_LIMIT, "VIF " + inflation);

        Estimate e = solveWithOffset(decay);
        assertEquals(confounded, e.flags().contains(Flag.OFFSET_CONFOUNDED), "flags " + e.flags());
        if (!confounded) {
            assertFalse(e.flags().contains(Flag.ILL_CONDITIONED));
        } else {
            assertTrue(e.standardErrors()[1] > 10 * 0.1 / Math.sqrt(SAMPLES), "offset SE inflated: " + e.standardErrors()[1]);
        }
    }

    private static Estimate solveWithOffset(double decay) {
        StateSpaceModel model = StateSpaceModel.continuous(new double[][] {{-decay}}, null, new double[][] {{1.0}},
                null, new double[] {0.1});
        double[] t = new double[SAMPLES];
        double[] y = new double[SAMPLES];
        for (int k = 0; k < SAMPLES; k++) {
            t[k] = k * STEP;
            y[k] = 5.0 * Math.exp(-decay * t[k]) + 1.5 + 0.1 * Math.sin(7.0 * k);
        }
        EstimationResult result = InitialStateEstimator.solve(model, new Trace(t, y, null, 1, 0, null),
                EstimationOptions.defaults().withOffsets(true).withKeepSeries(false));
        assertTrue(result instanceof Estimate, "got " + result);
        return (Estimate) result;
    }
}
