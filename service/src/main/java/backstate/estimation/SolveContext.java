package backstate.estimation;

import java.util.ArrayList;
import java.util.List;

/** What both passes over a trace share: model arrays, unknown layout, noise levels and step matrices. */
final class SolveContext {
    /** {@link #evenStep} of a trace whose steps differ (or that has one sample): step units are computed per sample. */
    static final long UNEVEN = 0;

    final StateSpaceModel model;
    final Trace trace;
    final EstimationOptions options;
    final int n;
    final int p;
    final int m;
    final int q;
    final double[] c;
    final NoiseLevels noise;
    final SampleSteps steps;
    final TransitionCache transitions;
    /** The trace's inputs, row-major by sample (a shared view; never written). */
    final double[] inputs;
    /** Whether uniform stretches go {@link LiftedStep#SAMPLES} samples at a time ({@link LiftedStep#pays}). */
    final boolean lift;
    /** [C | D], p × (n + m). */
    private final double[] outputMatrix;
    /**
     * The one step between every two consecutive samples, in step units, when validation found the
     * trace evenly sampled, else {@link #UNEVEN}. Sample k is then exactly k·step units from the
     * first, so {@link #units} needs no division and rounding, and every run of steps is equal.
     */
    private final long evenStep;
    /**
     * Whether uniform blocks also split off their residual (simulating each block and applying Qᵀ,
     * {@link UniformBlocks}): the continuous formulation's per-sample fit needs it; the sampled one
     * takes χ² from the residual pass and projects blocks ({@link BlockProjection}) unless a test
     * asks for the splitting route to compare with.
     */
    final boolean splitResiduals;

    /** A context that computes every sample's step units from its time. */
    SolveContext(StateSpaceModel model, Trace trace, EstimationOptions options) {
        this(model, trace, options, UNEVEN);
    }

    /** @param evenStep from {@link InitialStateEstimator#validatedStep}: the trace's one step, or {@link #UNEVEN} */
    SolveContext(StateSpaceModel model, Trace trace, EstimationOptions options, long evenStep) {
        this(model, trace, options, evenStep, options.formulation() == Formulation.CONTINUOUS);
    }

    private SolveContext(StateSpaceModel model, Trace trace, EstimationOptions options, long evenStep,
                         boolean splitResiduals) {
        this.splitResiduals = splitResiduals;
        this.model = model;
        this.trace = trace;
        this.options = options;
        this.n = model.states();
        this.p = model.outputs();
        this.m = model.inputs();
        this.q = n + (options.estimateOffsets() ? p : 0);
        this.c = model.c();
        this.noise = new NoiseLevels(model, trace);
        this.steps = new SampleSteps(model, trace.time(0));
        this.transitions = new TransitionCache(model, steps);
        this.inputs = trace.inputsView();
        this.lift = LiftedStep.pays(n, p, m);
        this.outputMatrix = Matrices.sideBySide(c, model.d(), p, n, m);
        this.evenStep = evenStep;
    }

    /** An independent context over the same inputs, for another thread (the transition cache is not thread-safe). */
    SolveContext copy() {
        return new SolveContext(model, trace, options, evenStep, splitResiduals);
    }

    /** The same context on the route that splits off every block's residual (to compare routes with). */
    SolveContext splittingResiduals() {
        return new SolveContext(model, trace, options, evenStep, true);
    }

    /** Step units of sample k from the first sample (ticks or periods). */
    long units(int k) {
        return evenStep != UNEVEN ? k * evenStep : steps.unitsOfSample(k, trace.time(k));
    }

    /**
     * Number of consecutive steps from sample k (at {@code unitsK} step units) of exactly
     * {@code step} units, at most {@code limit}; the caller makes sure samples k … k+limit exist.
     */
    int equalSteps(int k, long unitsK, long step, int limit) {
        if (evenStep != UNEVEN && step == evenStep) {
            return limit;
        }
        long previous = unitsK;
        for (int j = 0; j < limit; j++) {
            long units = units(k + j + 1);
            if (units - previous != step) {
                return j;
            }
            previous = units;
        }
        return limit;
    }

    /** Names of the unknowns in vector order. */
    List<String> unknownNames() {
        List<String> names = new ArrayList<>(q);
        for (int i = 0; i < n; i++) {
            names.add("x0[" + i + "]");
        }
        for (int j = 0; n + j < q; j++) {
            names.add("offset[" + j + "]");
        }
        return names;
    }

    /** A work vector for {@link #outputs} and {@link #propagate}: n + m entries. */
    double[] stepScratch() {
        return new double[n + m];
    }

    /**
     * Writes C·x + D·u_k, every output of sample k, into out (p entries), as [C | D]·[x; u_k]: each
     * sum runs C's terms, then D's. scratch comes from {@link #stepScratch()}.
     */
    void outputs(double[] x, int k, double[] scratch, double[] out) {
        stackWithInput(x, k, scratch);
        Matrices.multiplyVector(outputMatrix, scratch, p, n + m, out);
    }

    /**
     * x ← Ad·x + Bd·u_{k−1} over the step from sample k−1 to k, as [Ad | Bd]·[x; u_{k−1}]: each sum
     * runs Ad's terms, then Bd's. scratch comes from {@link #stepScratch()}.
     */
    void propagate(double[] x, int k, ZeroOrderHold.Step step, double[] scratch) {
        stackWithInput(x, k - 1, scratch);
        Matrices.multiplyVector(step.stacked(), scratch, n, n + m, x);
    }

    /** scratch ← [x; u_k]. */
    private void stackWithInput(double[] x, int k, double[] scratch) {
        System.arraycopy(x, 0, scratch, 0, n);
        System.arraycopy(inputs, k * m, scratch, n, m);
    }
}
