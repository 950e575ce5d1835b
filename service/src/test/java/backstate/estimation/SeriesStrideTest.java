package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;

import backstate.estimation.EstimateCases.Case;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * A series kept at every s-th sample is the full series' samples 0, s, 2s, …: the same times,
 * outputs, states and bands (the full series is itself checked against numpy in
 * InitialStateEstimatorReferenceTest). The two-output case has inputs and lifted steps, so kept
 * samples must stop a lifted run; stride 7 lands kept samples at every position within a run of 4.
 */
class SeriesStrideTest {
    /** Rounding: the strided solve takes single steps where the full one took lifted ones (LiftedStepTest bounds that at 1e-12). */
    private static final double RELATIVE = 1e-11;

    @ParameterizedTest
    @ValueSource(ints = {2, 7, 1000})
    void strided_series_is_every_s_th_sample_of_the_full_series(int stride) {
        Case c = EstimateCases.named("two-outputs-sigma");
        Estimate.Series full = solve(c, 1);
        Estimate.Series thin = solve(c, stride);
        int samples = full.times().length;
        assertEquals((samples + stride - 1) / stride, thin.times().length, "kept samples");
        assertEquals(stride, thin.stride());
        for (int i = 0; i < thin.times().length; i++) {
            int k = i * stride;
            assertEquals(full.times()[k], thin.times()[i], 0.0, "time of kept sample " + i);
            same(full.measured(), thin.measured(), k, i, full.outputCount(), "measured");
            same(full.fitted(), thin.fitted(), k, i, full.outputCount(), "fitted");
            same(full.residuals(), thin.residuals(), k, i, full.outputCount(), "residual");
            same(full.states(), thin.states(), k, i, full.stateCount(), "state");
            same(full.stateStandardErrors(), thin.stateStandardErrors(), k, i, full.stateCount(), "state SE");
            same(full.stateLower(), thin.stateLower(), k, i, full.stateCount(), "state lower");
            same(full.stateUpper(), thin.stateUpper(), k, i, full.stateCount(), "state upper");
        }
    }

    private static Estimate.Series solve(Case c, int stride) {
        EstimationResult r = InitialStateEstimator.solve(c.model(), c.trace(), c.options().withSeriesStride(stride));
        return ((Estimate) r).series();
    }

    private static void same(double[] full, double[] thin, int k, int i, int width, String what) {
        for (int j = 0; j < width; j++) {
            double want = full[k * width + j];
            assertEquals(want, thin[i * width + j], RELATIVE * Math.max(1.0, Math.abs(want)),
                    what + " [" + k + "][" + j + "]");
        }
    }
}
