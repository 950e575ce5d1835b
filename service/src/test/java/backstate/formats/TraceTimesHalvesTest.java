package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertEquals;

import backstate.estimation.ModelException;
import java.util.function.IntToDoubleFunction;
import org.junit.jupiter.api.Test;

/**
 * {@link TraceTimes#normalised} on traces long enough to be normalised in two halves, against the
 * one-pass rule written out here: each time rounded to the microsecond
 * ({@link RecordingTime#toMicrosecond}), and the first time that is not writable, or not after the
 * one before, refused by its index. Problems are put before, at and after the halves' seam
 * (segment {@code split} starts at {@code split * 16 384}), alone and two at a time (an unwritable
 * time is only ever followed by unwritable ones, since the times as read increase).
 */
class TraceTimesHalvesTest {
    private static final int N = 150_000;
    /** The first index of the later half: the halves split at a whole segment. */
    private static final int SEAM = (N + DoubleColumn.SEGMENT - 1) / DoubleColumn.SEGMENT / 2 * DoubleColumn.SEGMENT;
    private static final int[] PLACES = {1, 1_000, SEAM - 1, SEAM, SEAM + 1, N - 1};
    /** Past the year 9999 (253 402 300 800 s since 1970): RFC 3339 cannot write it. */
    private static final double UNWRITABLE = 3e11;

    @Test
    void the_seam_lies_inside_the_trace_and_both_halves_are_used() {
        assertEquals(81_920, SEAM);
        assertEquals(true, N >= TraceTimes.TWO_HALVES_FROM);
    }

    @Test
    void times_read_as_the_one_pass_rule_gives_them() {
        IntToDoubleFunction time = k -> 1.7e9 + k * 0.1 + 1e-7;
        double[] out = filled(time).normalised();
        for (int k = 0; k < N; k++) {
            assertEquals(RecordingTime.toMicrosecond(time.applyAsDouble(k)), out[k], "time " + k);
        }
    }

    @Test
    void the_first_unfit_time_is_refused_wherever_it_lies() {
        for (int a : PLACES) {
            assertRefusedAsOnePass(tooClose(a));
            assertRefusedAsOnePass(unwritableFrom(a));
            for (int b : PLACES) {
                if (b > a) {
                    assertRefusedAsOnePass(k -> k >= b ? UNWRITABLE + k : tooClose(a).applyAsDouble(k));
                    assertRefusedAsOnePass(k -> k == b ? b - 1 + 1e-7 : tooClose(a).applyAsDouble(k));
                }
            }
        }
    }

    /** Whole seconds, but time a only 0.1 µs after the one before: both round to the same microsecond. */
    private static IntToDoubleFunction tooClose(int a) {
        return k -> k == a ? a - 1 + 1e-7 : k;
    }

    private static IntToDoubleFunction unwritableFrom(int a) {
        return k -> k >= a ? UNWRITABLE + k : k;
    }

    private static void assertRefusedAsOnePass(IntToDoubleFunction time) {
        String expected = onePass(time);
        String got;
        try {
            filled(time).normalised();
            got = "kept";
        } catch (InputException | ModelException e) {
            got = e.getClass().getSimpleName() + ": " + e.getMessage();
        }
        assertEquals(expected, got);
    }

    /** The rule in one pass: the first time outside the kept years, or not after the one before once rounded. */
    private static String onePass(IntToDoubleFunction time) {
        double before = Double.NaN;
        for (int k = 0; k < N; k++) {
            double v = time.applyAsDouble(k);
            double rounded = RecordingTime.toMicrosecond(v);
            if (!RecordingTime.kept(rounded)) {
                String written = java.math.BigDecimal.valueOf(v).stripTrailingZeros().toPlainString();
                return "InputException: time[" + k + "]: got " + written + " s since 1970-01-01T00:00:00Z, expected "
                        + RecordingTime.KEPT_YEARS;
            }
            if (k > 0 && !(rounded > before)) {
                // The number as the trace wrote it, in plain digits (0.0000001, not 1.0E-7).
                String written = java.math.BigDecimal.valueOf(v).stripTrailingZeros().toPlainString();
                return "ModelException: time[" + k + "]: got " + written + " s, within 1 µs of the time before it, expected times at"
                        + " least 1 µs apart";
            }
            before = rounded;
        }
        return "kept";
    }

    private static TraceTimes filled(IntToDoubleFunction time) {
        TraceTimes times = new TraceTimes(N);
        for (int k = 0; k < N; k++) {
            assertEquals(true, times.add(time.applyAsDouble(k), false), "time " + k + " is after the one before as read");
        }
        return times;
    }
}
