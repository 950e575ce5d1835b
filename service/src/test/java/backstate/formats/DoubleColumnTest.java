package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.stream.IntStream;
import org.junit.jupiter.api.Test;

/**
 * {@link DoubleColumn} against a plain array of the same values, at and around every length where
 * its layout changes: the first segment's growth steps, whole segments, and the sample limit.
 */
class DoubleColumnTest {
    private static final int FIRST = DoubleColumn.FIRST_LENGTH;
    private static final int SEGMENT = DoubleColumn.SEGMENT;
    /** Lengths at and beside each change of layout. */
    private static final int[] LENGTHS = IntStream.of(0, 1, FIRST, 2 * FIRST, 4 * FIRST, 8 * FIRST, SEGMENT, 2 * SEGMENT, 3 * SEGMENT)
            .flatMap(n -> IntStream.of(n - 1, n, n + 1)).filter(n -> n >= 0).distinct().toArray();

    @Test
    void values_read_back_as_added_at_every_layout_change() {
        for (int n : LENGTHS) {
            DoubleColumn column = filled(n, Integer.MAX_VALUE);
            assertEquals(n, column.size());
            for (int k = 0; k < n; k++) {
                assertEquals(value(k), column.get(k), "length " + n + ", value " + k);
            }
        }
    }

    @Test
    void every_segment_but_the_last_is_whole_and_no_segment_is_longer_than_needed_twice() {
        for (int n : LENGTHS) {
            double[][] segments = filled(n, Integer.MAX_VALUE).segments();
            int used = (n + SEGMENT - 1) / SEGMENT;
            for (int s = 0; s < used - 1; s++) {
                assertEquals(SEGMENT, segments[s].length, "length " + n + ", segment " + s);
            }
            if (used > 0) {
                int inLast = n - (used - 1) * SEGMENT;
                int last = segments[used - 1].length;
                assertTrue(last >= inLast && (last <= Math.max(FIRST, 2 * inLast) || last == SEGMENT),
                        "length " + n + ": last segment of " + last + " for " + inLast + " values");
            }
            for (int s = used; s < segments.length; s++) {
                assertNull(segments[s], "length " + n + ", segment " + s + " past the values");
            }
        }
    }

    @Test
    void a_thousand_sample_trace_takes_one_small_segment() {
        double[][] segments = filled(1000, Integer.MAX_VALUE).segments();
        assertEquals(FIRST, segments[0].length);
        assertNull(segments[1]);
    }

    @Test
    void the_value_past_the_limit_is_refused_naming_the_field() {
        for (int limit : new int[] {0, 1, FIRST - 1, FIRST, FIRST + 1, SEGMENT, SEGMENT + 1}) {
            DoubleColumn column = filled(limit, limit);
            InputException refused = assertThrows(InputException.class, () -> column.add(1.0));
            assertEquals("return_air", refused.field());
            assertTrue(refused.getMessage().contains("got more than " + limit + " samples"), refused.getMessage());
            assertEquals(limit, column.size());
        }
    }

    @Test
    void interleaved_values_are_the_added_ones() {
        for (int n : LENGTHS) {
            double[] rows = new double[2 * n];
            DoubleColumn.interleave(new DoubleColumn[] {filled(n, Integer.MAX_VALUE), null}, n, rows);
            for (int k = 0; k < n; k++) {
                assertEquals(value(k), rows[2 * k], "interleaved, length " + n + ", value " + k);
                assertTrue(Double.isNaN(rows[2 * k + 1]), "the null column is NaN");
            }
        }
    }

    @Test
    void truncated_then_added_to_reads_as_if_only_the_kept_values_had_been_added() {
        for (int n : LENGTHS) {
            for (int kept : LENGTHS) {
                if (kept > n) {
                    continue;
                }
                DoubleColumn column = filled(n, Integer.MAX_VALUE);
                column.truncate(kept);
                for (int k = kept; k < n + 3; k++) {
                    column.add(value(k));
                }
                assertSameAs(filled(n + 3, Integer.MAX_VALUE), column, "length " + n + " cut to " + kept);
            }
        }
    }

    @Test
    void a_truncated_column_still_refuses_the_value_past_the_limit() {
        DoubleColumn column = filled(SEGMENT + 1, SEGMENT + 1);
        column.truncate(SEGMENT - 1);
        column.add(value(SEGMENT - 1));
        column.add(value(SEGMENT));
        assertThrows(InputException.class, () -> column.add(1.0));
        assertEquals(SEGMENT + 1, column.size());
    }

    @Test
    void appended_columns_read_as_their_values_added_one_by_one() {
        for (int n : LENGTHS) {
            for (int m : LENGTHS) {
                DoubleColumn more = new DoubleColumn("return_air", Integer.MAX_VALUE);
                for (int k = n; k < n + m; k++) {
                    more.add(value(k));
                }
                DoubleColumn column = filled(n, Integer.MAX_VALUE);
                column.addAll(more);
                assertSameAs(filled(n + m, Integer.MAX_VALUE), column, length(n) + " and " + m + " appended");
            }
        }
    }

    @Test
    void appending_past_the_limit_is_refused_as_adding_would_be() {
        DoubleColumn more = filled(3, Integer.MAX_VALUE);
        DoubleColumn column = filled(SEGMENT - 1, SEGMENT + 1);
        InputException refused = assertThrows(InputException.class, () -> column.addAll(more));
        assertTrue(refused.getMessage().contains("got more than " + (SEGMENT + 1) + " samples"), refused.getMessage());
        assertEquals(SEGMENT + 1, column.size());
    }

    /** Same values, and the same segment layout, as {@code expected}. */
    private static void assertSameAs(DoubleColumn expected, DoubleColumn actual, String what) {
        assertEquals(expected.size(), actual.size(), what);
        for (int k = 0; k < expected.size(); k++) {
            assertEquals(expected.get(k), actual.get(k), what + ", value " + k);
        }
        int used = (expected.size() + SEGMENT - 1) / SEGMENT;
        for (int s = 0; s < used - 1; s++) {
            assertEquals(SEGMENT, actual.segments()[s].length, what + ", segment " + s + " is whole");
        }
        for (int s = used; s < actual.segments().length; s++) {
            assertNull(actual.segments()[s], what + ", segment " + s + " past the values");
        }
    }

    private static String length(int n) {
        return "length " + n;
    }

    private static DoubleColumn filled(int n, int limit) {
        DoubleColumn column = new DoubleColumn("return_air", limit);
        for (int k = 0; k < n; k++) {
            column.add(value(k));
        }
        return column;
    }

    private static double value(int k) {
        return k * 0.5 - 3;
    }
}
