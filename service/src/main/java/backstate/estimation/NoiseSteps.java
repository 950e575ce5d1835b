package backstate.estimation;

import java.util.LinkedHashMap;
import java.util.Map;

/**
 * Square-root factors G (G Gᵀ = Q_d) of the per-interval process-noise covariance, cached by step
 * length like {@link TransitionCache}: bounded, least-recently-used, and the last step kept without
 * boxing a key. Continuous models integrate the spectral density over the step
 * ({@link ProcessNoiseCovariance#continuous}); discrete ones sum the per-period covariance over the
 * periods of the step ({@link ProcessNoiseCovariance#discrete}).
 */
final class NoiseSteps {
    /** Distinct steps kept: {@link TransitionCache#CAPACITY}, so both caches cover the same steps. */
    static final int CAPACITY = TransitionCache.CAPACITY;

    private final double[] a;
    private final double[] noise;
    private final int n;
    private final boolean discrete;
    private final double unitSeconds;
    private final Map<Long, ProcessNoiseCovariance.Factor> cache = new LinkedHashMap<>(64, 0.75f, true) {
        @Override
        protected boolean removeEldestEntry(Map.Entry<Long, ProcessNoiseCovariance.Factor> eldest) {
            return size() > CAPACITY;
        }
    };
    private long lastUnits = -1;
    private ProcessNoiseCovariance.Factor last;

    NoiseSteps(SolveContext ctx) {
        this.a = ctx.model.a();
        double[] declared = ctx.model.processNoise();
        this.n = ctx.n;
        this.noise = declared == null ? new double[n * n] : declared;
        this.discrete = ctx.model.isDiscrete();
        this.unitSeconds = ctx.steps.unitSeconds();
    }

    /** The factor over {@code units} step units (ticks or periods), units ≥ 1. */
    ProcessNoiseCovariance.Factor over(long units) {
        if (units == lastUnits && last != null) {
            return last;
        }
        ProcessNoiseCovariance.Factor f = cache.get(units);
        if (f == null) {
            double[] q = discrete
                    ? ProcessNoiseCovariance.discrete(a, noise, n, units)
                    : ProcessNoiseCovariance.continuous(a, noise, n, units * unitSeconds);
            f = ProcessNoiseCovariance.factor(q, n);
            cache.put(units, f);
        }
        lastUnits = units;
        last = f;
        return f;
    }
}
