package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Random;
import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * The sampled formulation's projected block route ({@link BlockProjection}, χ² from the residual
 * pass) against the route that simulates every block, applies Qᵀ and splits off each block's
 * residual ({@link SolveContext#splittingResiduals}), itself checked against numpy in
 * InitialStateEstimatorReferenceTest. Both solve the same least-squares problem, so estimate,
 * covariance and χ² must agree to rounding: 1e-10 relative (observed below 1e-13). Traces have
 * uniform stretches (blocks), jittered steps and gaps (per-sample equations), two inputs with
 * feed-through, a few missing values, and run with offsets and a prior; the long one is split into
 * two chunks in both passes.
 */
class BlockProjectionTest {
    static final double TOLERANCE = 1e-10;

    static Stream<Arguments> cases() {
        List<Arguments> out = new ArrayList<>();
        for (String kind : new String[] {"continuous", "discrete"}) {
            for (int samples : new int[] {6_000, ChunkedEquations.PARALLEL_FROM_SAMPLES + 3_001}) {
                out.add(Arguments.of(kind, samples, false));
                out.add(Arguments.of(kind, samples, true));
            }
        }
        return out.stream();
    }

    @ParameterizedTest(name = "{0} model, {1} samples, offsets and prior: {2}")
    @MethodSource("cases")
    void projected_blocks_solve_the_same_problem_as_split_blocks(String kind, int samples, boolean offsetsAndPrior) {
        StateSpaceModel model = "discrete".equals(kind) ? ChunkTraces.discrete() : ChunkTraces.continuous();
        Trace trace = trace(model, samples, 7L);
        EstimationOptions options = EstimationOptions.defaults().withKeepSeries(false);
        if (offsetsAndPrior) {
            options = options.withOffsets(true).withPrior(prior(model.states()));
        }
        Estimate projected = (Estimate) InitialStateEstimator.solve(model, trace, options);

        SolveContext split = new SolveContext(model, trace, options).splittingResiduals();
        EquationPass.Result pass = ChunkedEquations.run(split);
        WeightedFactors factors = pass.factors();
        if (offsetsAndPrior) {
            factors = factors.copy();
            factors.addPrior(options.prior(), model.states());
        }
        int q = split.q;
        double[] r = factors.estimate.factorR();
        double[] solution = Triangular.solveUpper(r, factors.estimate.rhs(), q);
        double[] covariance = Triangular.timesOwnTranspose(Triangular.invertUpper(r, q), q);
        double chiSquare = factors.estimate.residualSquares();

        String what = kind + ", N = " + samples;
        for (int i = 0; i < q; i++) {
            assertEquals(solution[i], projected.solution()[i], TOLERANCE * Math.max(1.0, Math.abs(solution[i])),
                    what + " θ[" + i + "]");
        }
        double scale = Arrays.stream(covariance).map(Math::abs).max().orElseThrow();
        for (int i = 0; i < q * q; i++) {
            assertEquals(covariance[i], projected.covariance()[i], TOLERANCE * scale, what + " covariance " + i);
        }
        assertEquals(chiSquare, projected.chiSquare(), TOLERANCE * chiSquare, what + " χ²");
        assertEquals(factors.estimate.equations() - q, projected.degreesOfFreedom(), what + " dof");
        assertTrue(Double.isNaN(ChunkedEquations.run(new SolveContext(model, trace, options)).factors().estimate
                .residualSquares()), what + ": blocks took the projected route");
    }

    @ParameterizedTest(name = "{0} model")
    @MethodSource("models")
    void the_joined_equation_pass_hands_on_the_state_the_sweep_reaches(String kind) {
        StateSpaceModel model = "discrete".equals(kind) ? ChunkTraces.discrete() : ChunkTraces.continuous();
        Trace trace = trace(model, ChunkedEquations.PARALLEL_FROM_SAMPLES + 3_001, 9L);
        SolveContext ctx = new SolveContext(model, trace, EstimationOptions.defaults());
        EquationPass.ChunkStart join = ChunkedEquations.run(ctx).join();
        double[] x0 = Arrays.copyOf(ChunkTraces.truth(model), model.states());

        double[] swept = StateSweep.statesAt(ctx, ctx.transitions, x0, new int[] {join.sample()})[0];
        double[] handed = join.stateFrom(x0, model.states());

        double scale = Arrays.stream(swept).map(Math::abs).max().orElseThrow();
        for (int i = 0; i < swept.length; i++) {
            // Two routes to the same state (blocked sweep; projected blocks, per-sample steps and
            // Φ(t_m)·x0): rounding only, 1e-12 of the state's scale.
            assertEquals(swept[i], handed[i], 1e-12 * scale, kind + " state[" + i + "] at sample " + join.sample());
        }
    }

    static Stream<String> models() {
        return Stream.of("continuous", "discrete");
    }

    /** x0 ~ N(0.5·1, diag(0.1 … )) with a correlation between the first two states. */
    private static Prior prior(int n) {
        double[] mean = new double[n];
        double[] covariance = new double[n * n];
        Arrays.fill(mean, 0.5);
        for (int i = 0; i < n; i++) {
            covariance[i * n + i] = 0.1 * (i + 1);
        }
        covariance[1] = 0.05;
        covariance[n] = 0.05;
        return new Prior(mean, covariance);
    }

    /**
     * Seeded noisy outputs of the model ({@link ChunkTraces#noisyOutputs}, with offsets): one step, a
     * gap, jittered steps (continuous: ±200 µs; discrete: 1–3 periods), twice the step, one step;
     * 12 missing values; the inputs of {@link ChunkTraces#inputs}.
     */
    static Trace trace(StateSpaceModel model, int samples, long seed) {
        Random random = new Random(seed);
        boolean discrete = model.isDiscrete();
        double unit = discrete ? model.samplePeriod() : 1e-6;
        long one = discrete ? 1 : 1000;
        double[] times = new double[samples];
        long units = 0;
        for (int k = 1; k < samples; k++) {
            long step = one;
            if (k == samples / 4) {
                step = 37 * one;
            } else if (k > samples / 4 && k < samples / 4 + 1000) {
                step = discrete ? 1 + random.nextInt(3) : 800 + random.nextInt(401);
            } else if (k > samples / 3 && k < 2 * samples / 3) {
                step = 2 * one;
            }
            units += step;
            times[k] = 10.0 + units * unit;
        }
        times[0] = 10.0;
        double[] inputs = ChunkTraces.inputs(random, samples);
        double[] outputs = ChunkTraces.noisyOutputs(model, times, inputs, random);
        for (int i = 0; i < 12; i++) {
            outputs[random.nextInt(outputs.length)] = Double.NaN;
        }
        return new Trace(times, outputs, inputs, 2, 2, ChunkTraces.SIGMA);
    }
}
