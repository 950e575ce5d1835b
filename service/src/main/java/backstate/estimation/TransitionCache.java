package backstate.estimation;

import java.util.LinkedHashMap;
import java.util.Map;

/**
 * Transition and input matrices over a step of a given length, cached by step length so a trace
 * with few distinct steps costs O(#distinct · n³ + N · n²) rather than N exponentials.
 *
 * <p>Continuous models discretise by the block exponential of [[A, B],[0, 0]]·h (Van Loan 1978);
 * discrete models raise [[A, B],[0, I]] to the number of periods. The cache is bounded and
 * least-recently-used, so a trace whose steps all differ costs one computation per step and a
 * bounded amount of memory.
 */
final class TransitionCache {
    /** Distinct step lengths kept; 1024 × (n² + nm) doubles is at most 36 MB at the 64-state limit. */
    static final int CAPACITY = 1024;

    private final StateSpaceModel model;
    private final double[] a;
    private final double[] b;
    private final SampleSteps steps;
    private final Map<Long, ZeroOrderHold.Step> cache = new LinkedHashMap<>(64, 0.75f, true) {
        @Override
        protected boolean removeEldestEntry(Map.Entry<Long, ZeroOrderHold.Step> eldest) {
            return size() > CAPACITY;
        }
    };

    /** Lifted forms kept: each is (4p + n) × (n + 4m) doubles, under 0.3 MB at the model size limits. */
    static final int LIFTED_CAPACITY = 8;

    /** Lifted forms by step length, for the few step lengths of uniform stretches. */
    private final Map<Long, LiftedStep> lifted = new LinkedHashMap<>(16, 0.75f, true) {
        @Override
        protected boolean removeEldestEntry(Map.Entry<Long, LiftedStep> eldest) {
            return size() > LIFTED_CAPACITY;
        }
    };
    private long lastLiftedUnits = -1;
    private LiftedStep lastLifted;

    /** The last step asked for: a uniformly sampled trace asks for the same one every time, without boxing a key. */
    private long lastUnits = -1;
    private ZeroOrderHold.Step lastStep;

    TransitionCache(StateSpaceModel model, SampleSteps steps) {
        this.model = model;
        this.a = model.a();
        this.b = model.b();
        this.steps = steps;
    }

    /** Transition and held-input matrices over {@code units} step units (ticks or periods), units ≥ 1. */
    ZeroOrderHold.Step over(long units) {
        if (units == lastUnits && lastStep != null) {
            return lastStep;
        }
        ZeroOrderHold.Step step = cache.get(units);
        if (step == null) {
            step = compute(units);
            cache.put(units, step);
        }
        lastUnits = units;
        lastStep = step;
        return step;
    }

    /** {@link LiftedStep#SAMPLES} steps of {@code units} each as one lifted step, for the model's C and D. */
    LiftedStep lifted(long units) {
        if (units == lastLiftedUnits && lastLifted != null) {
            return lastLifted;
        }
        LiftedStep step = lifted.get(units);
        if (step == null) {
            step = new LiftedStep(over(units), model.c(), model.d(), model.states(), model.outputs(), model.inputs());
            lifted.put(units, step);
        }
        lastLiftedUnits = units;
        lastLifted = step;
        return step;
    }

    /** The same matrices computed afresh and not cached: for one-off offsets such as a block's start time. */
    ZeroOrderHold.Step fresh(long units) {
        return compute(units);
    }

    private ZeroOrderHold.Step compute(long units) {
        int n = model.states();
        int m = model.inputs();
        if (model.isDiscrete()) {
            return ZeroOrderHold.power(a, b, n, m, units);
        }
        return ZeroOrderHold.discretize(a, b, n, m, units * steps.unitSeconds());
    }
}
