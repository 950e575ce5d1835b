package backstate.estimation;

import static backstate.estimation.EstimateCases.assertCloseNormwise;
import static backstate.estimation.EstimateCases.flat;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * The window-end state without a series, from {@link WindowEndFilter}, on every case of
 * {@code test-data/reference/process-noise.json} (generator {@code generate_process_noise.py}: a
 * dense NumPy MAP solve over every state; uniform times, input with feed-through + missing samples +
 * uneven times + prior, singular noise with offsets, a discrete model with skipped periods).
 */
class ProcessNoiseWindowEndFilterTest {
    /**
     * Filter against smoother: two backward-stable orthogonal routes to the same well-conditioned
     * (κ below 1e4) problem agree to a few hundred ulps; 1e-10 leaves room for that and no more.
     */
    static final double ROUTES_AGREE = 1e-10;

    static Stream<JsonNode> cases() {
        return ProcessNoiseSmootherReferenceTest.cases();
    }

    static Estimate solve(JsonNode c, boolean keepSeries, Double referenceTime) {
        StateSpaceModel model = ProcessNoiseSmootherReferenceTest.model(c.get("model"));
        Trace trace = ProcessNoiseSmootherReferenceTest.trace(c.get("trace"), model);
        EstimationOptions options = ProcessNoiseSmootherReferenceTest.options(c.get("options"))
                .withKeepSeries(keepSeries).withReferenceTime(referenceTime);
        return assertInstanceOf(Estimate.class, InitialStateEstimator.solve(model, trace, options), c.get("name").asText());
    }

    /** Without a series the filter's route is the one taken: it does not decline any reference case. */
    @ParameterizedTest(name = "{0}")
    @MethodSource("cases")
    void the_filter_accepts_every_reference_case(JsonNode c) {
        StateSpaceModel model = ProcessNoiseSmootherReferenceTest.model(c.get("model"));
        Trace trace = ProcessNoiseSmootherReferenceTest.trace(c.get("trace"), model);
        EstimationOptions options = ProcessNoiseSmootherReferenceTest.options(c.get("options")).withPrior(null);
        SolveContext ctx = new SolveContext(model, trace, options);
        assertNotNull(WindowEndFilter.run(ctx, new NoiseSteps(ctx), null, 0), c.get("name").asText());
    }

    /** Source: the smoother's own window end (SmoothedTrajectory, itself checked against NumPy). */
    @ParameterizedTest(name = "{0}")
    @MethodSource("cases")
    void window_end_without_series_equals_the_smoothers_window_end(JsonNode c) {
        String name = c.get("name").asText();
        Estimate.StateAt smoothed = solve(c, true, null).windowEnd();
        Estimate filtered = solve(c, false, null);
        assertNull(filtered.series(), name + " series");
        Estimate.StateAt end = filtered.windowEnd();
        assertEquals(smoothed.time(), end.time(), name + " time");
        assertCloseNormwise(smoothed.state(), end.state(), ROUTES_AGREE, name + " state");
        assertCloseNormwise(smoothed.covariance(), end.covariance(), ROUTES_AGREE, name + " covariance");
        assertCloseNormwise(smoothed.standardErrorsScaled(), end.standardErrorsScaled(), ROUTES_AGREE,
                name + " scaled standard errors");
        assertCloseNormwise(smoothed.lower(), end.lower(), ROUTES_AGREE, name + " lower bound");
        assertCloseNormwise(smoothed.upper(), end.upper(), ROUTES_AGREE, name + " upper bound");
    }

    /** Source: NumPy's dense MAP solve, last row of its states and its window-end covariance (tolerance as the reference test's). */
    @ParameterizedTest(name = "{0}")
    @MethodSource("cases")
    void window_end_without_series_matches_the_dense_numpy_solve(JsonNode c) {
        String name = c.get("name").asText();
        JsonNode x = c.get("expected");
        double[] states = flat(x.get("states"));
        int n = x.get("windowEndCovariance").size();
        double[] last = java.util.Arrays.copyOfRange(states, states.length - n, states.length);
        Estimate.StateAt end = solve(c, false, null).windowEnd();
        assertCloseNormwise(last, end.state(), ProcessNoiseSmootherReferenceTest.TOLERANCE, name + " state");
        assertCloseNormwise(flat(x.get("windowEndCovariance")), end.covariance(), ProcessNoiseSmootherReferenceTest.TOLERANCE,
                name + " covariance");
    }

    /** A reference time at the last sample is the window end: the filter answers it, equal to the smoother's reference state. */
    @ParameterizedTest(name = "{0}")
    @MethodSource("cases")
    void reference_time_at_the_last_sample_equals_the_smoothers(JsonNode c) {
        String name = c.get("name").asText();
        double[] times = EstimateCases.vector(c.get("trace").get("times"));
        double lastTime = times[times.length - 1];
        Estimate.StateAt smoothed = solve(c, true, lastTime).reference();
        Estimate.StateAt filtered = solve(c, false, lastTime).reference();
        assertCloseNormwise(smoothed.state(), filtered.state(), ROUTES_AGREE, name + " state");
        assertCloseNormwise(smoothed.covariance(), filtered.covariance(), ROUTES_AGREE, name + " covariance");
    }

    /**
     * A discrete shift register (A nilpotent, so Φ singular) is refused by the filter, and the solve
     * then takes the smoother's route: same window end as with a series.
     */
    @Test
    void a_singular_transition_falls_back_to_the_smoother() {
        StateSpaceModel model = StateSpaceModel.discrete(new double[][] {{0, 1}, {0, 0}}, null,
                new double[][] {{1, 0}, {0, 1}}, null, 1.0, null).withProcessNoise(new double[][] {{0.01, 0}, {0, 0.02}});
        double[] times = new double[12];
        double[] outputs = new double[24];
        for (int k = 0; k < times.length; k++) {
            times[k] = k;
            outputs[2 * k] = Math.sin(k);
            outputs[2 * k + 1] = Math.cos(0.5 * k);
        }
        Trace trace = new Trace(times, outputs, null, 2, 0, new double[] {0.1, 0.1});
        EstimationOptions options = EstimationOptions.defaults().withFormulation(Formulation.PROCESS_NOISE);
        SolveContext ctx = new SolveContext(model, trace, options);
        assertNull(WindowEndFilter.run(ctx, new NoiseSteps(ctx), null, 0));
        Estimate withSeries = assertInstanceOf(Estimate.class, InitialStateEstimator.solve(model, trace, options));
        Estimate without = assertInstanceOf(Estimate.class,
                InitialStateEstimator.solve(model, trace, options.withKeepSeries(false)));
        assertEquals(withSeries.windowEnd().state()[0], without.windowEnd().state()[0], 0.0);
        assertEquals(withSeries.windowEnd().covariance()[3], without.windowEnd().covariance()[3], 0.0);
    }
}
