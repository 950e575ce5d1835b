package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertThrows;

import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * A discrete model's grid at a real date: at 1.8·10⁹ s a double resolves only 0.24 µs, and times
 * are kept to the microsecond, so a 0.01 s or 1 ms grid is posted as whole microseconds. Such a
 * trace solves to the closed form of a scalar x[k+1] = a x[k], y = x (derived by hand: x̂0 =
 * Σ a^k y_k / Σ a^{2k}); a time 3 µs off the grid is refused, with its offset in periods.
 */
class DiscreteGridAtEpochTest {
    private static final long EPOCH_MICROS = 1_800_000_000_000_000L;
    private static final double A = 0.99;
    private static final int N = 50;

    @ParameterizedTest(name = "period {0} µs")
    @ValueSource(longs = {1_000, 10_000, 50_000, 100_000})
    void a_fine_grid_at_a_real_date_solves_to_the_closed_form(long periodMicros) {
        double[] times = new double[N];
        double[] y = new double[N];
        double power = 1.0;
        double numerator = 0.0;
        double denominator = 0.0;
        for (int k = 0; k < N; k++) {
            times[k] = (EPOCH_MICROS + k * periodMicros) / 1e6;
            y[k] = power * 2.0 + 0.01 * Math.sin(k);
            numerator += power * y[k];
            denominator += power * power;
            power *= A;
        }
        Estimate e = assertInstanceOf(Estimate.class, InitialStateEstimator.solve(model(periodMicros),
                new Trace(times, y, null, 1, 0, null), EstimationOptions.defaults().withKeepSeries(false)));
        assertEquals(numerator / denominator, e.solution()[0], 1e-12, "x0 (closed form, rounding only)");
    }

    @ParameterizedTest(name = "period {0} µs")
    @ValueSource(longs = {1_000, 10_000})
    void a_time_three_microseconds_off_the_grid_is_refused_with_its_offset(long periodMicros) {
        double[] times = {EPOCH_MICROS / 1e6, (EPOCH_MICROS + periodMicros) / 1e6, (EPOCH_MICROS + 2 * periodMicros + 3) / 1e6};
        ModelException refused = assertThrows(ModelException.class, () -> InitialStateEstimator.solve(model(periodMicros),
                new Trace(times, new double[] {1, 1, 1}, null, 1, 0, null), EstimationOptions.defaults()));
        assertEquals("time[2]", refused.field());
        String periods = new java.math.BigDecimal(2 + 3.0 / periodMicros).round(new java.math.MathContext(9))
                .stripTrailingZeros().toPlainString();
        assertEquals(true, refused.problem().endsWith("; it is " + periods + " periods after it"), refused.problem());
    }

    private static StateSpaceModel model(long periodMicros) {
        return StateSpaceModel.discrete(new double[][] {{A}}, null, new double[][] {{1.0}}, null, periodMicros / 1e6,
                new double[] {0.01});
    }
}
