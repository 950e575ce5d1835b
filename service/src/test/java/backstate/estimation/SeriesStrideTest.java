package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.estimation.EstimateCases.Case;
import com.fasterxml.jackson.databind.JsonNode;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * A series kept at stride s is the full series' samples 0, s, 2s, … and the last: the same times,
 * outputs, states and bands (the full series is itself checked against numpy in
 * InitialStateEstimatorReferenceTest and ProcessNoiseSmootherReferenceTest). The two-output case
 * has inputs and lifted steps, so kept samples must stop a lifted run; stride 7 lands kept samples
 * at every position within a run of 4. Its last sample (499) is off the stride for 2, 7 and 1000;
 * the process-noise case's (39) is on it for 3 and off it for 7 and 1000.
 */
class SeriesStrideTest {
    /** Rounding: the strided solve takes single steps where the full one took lifted ones (LiftedStepTest bounds that at 1e-12). */
    private static final double RELATIVE = 1e-11;

    @ParameterizedTest
    @ValueSource(ints = {2, 7, 1000})
    void strided_series_is_every_s_th_sample_and_the_last_of_the_full_series(int stride) {
        Case c = EstimateCases.named("two-outputs-sigma");
        assertThinnedLikeFull(solve(c, 1), solve(c, stride), stride);
    }

    @ParameterizedTest
    @ValueSource(ints = {3, 7, 1000})
    void process_noise_series_keeps_the_same_samples(int stride) {
        JsonNode c = ProcessNoiseSmootherReferenceTest.cases().findFirst().orElseThrow();
        assertThinnedLikeFull(smoothed(c, 1), smoothed(c, stride), stride);
    }

    /** Every (N, maxPoints) up to 60: at most maxPoints kept, and a stride one smaller would keep more. */
    @Test
    void stride_for_max_points_is_the_smallest_that_fits() {
        for (int samples = 1; samples <= 60; samples++) {
            for (int maxPoints = 2; maxPoints <= 60; maxPoints++) {
                int stride = KeptSamples.strideFor(samples, maxPoints);
                String where = "N = " + samples + ", maxPoints = " + maxPoints;
                assertTrue(new KeptSamples(samples, stride).count() <= maxPoints, where);
                if (stride > 1) {
                    assertTrue(new KeptSamples(samples, stride - 1).count() > maxPoints, where);
                }
            }
        }
        assertThrows(IllegalArgumentException.class, () -> KeptSamples.strideFor(10, 1));
    }

    /** Every (N, s) up to 40 against the rule written out by hand: sample, slot and anyIn agree. */
    @Test
    void kept_samples_follow_the_rule_for_every_small_case() {
        for (int samples = 1; samples <= 40; samples++) {
            for (int stride = 1; stride <= 45; stride++) {
                List<Integer> want = new ArrayList<>();
                for (int k = 0; k < samples; k++) {
                    if (k % stride == 0 || k == samples - 1) {
                        want.add(k);
                    }
                }
                KeptSamples kept = new KeptSamples(samples, stride);
                String where = "N = " + samples + ", s = " + stride;
                assertEquals(want.size(), kept.count(), where);
                for (int i = 0; i < want.size(); i++) {
                    assertEquals(want.get(i), kept.sample(i), where + ", point " + i);
                }
                for (int k = 0; k < samples; k++) {
                    assertEquals(want.indexOf(k), kept.slotOf(k), where + ", sample " + k);
                    for (int length = 1; k + length <= samples; length++) {
                        boolean any = false;
                        for (int i = k; i < k + length; i++) {
                            any |= want.contains(i);
                        }
                        assertEquals(any, kept.anyIn(k, length), where + ", samples " + k + " +" + length);
                    }
                }
            }
        }
    }

    private static void assertThinnedLikeFull(Estimate.Series full, Estimate.Series thin, int stride) {
        int samples = full.times().length;
        int last = samples - 1;
        int expected = last / stride + 1 + (last % stride == 0 ? 0 : 1);
        assertEquals(expected, thin.times().length, "kept samples");
        assertEquals(stride, thin.stride());
        assertEquals(full.times()[last], thin.times()[expected - 1], 0.0, "the series ends at the window's last sample");
        for (int i = 0; i < expected; i++) {
            int k = i == expected - 1 ? last : i * stride;
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

    private static Estimate.Series smoothed(JsonNode c, int stride) {
        StateSpaceModel model = ProcessNoiseSmootherReferenceTest.model(c.get("model"));
        EstimationOptions options = ProcessNoiseSmootherReferenceTest.options(c.get("options")).withSeriesStride(stride);
        EstimationResult r = InitialStateEstimator.solve(model, ProcessNoiseSmootherReferenceTest.trace(c.get("trace"), model),
                options);
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
