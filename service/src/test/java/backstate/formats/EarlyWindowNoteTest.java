package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;

import java.time.Instant;
import org.junit.jupiter.api.Test;

/** The warning for a window dated before 2000, at its boundary (2000-01-01T00:00:00Z from java.time, not a constant). */
class EarlyWindowNoteTest {
    static final double Y2000 = Instant.parse("2000-01-01T00:00:00Z").getEpochSecond();

    @Test
    void a_window_from_2000_on_has_no_note() {
        assertNull(RecordingTime.earlyWindowNote(Y2000, true));
        assertNull(RecordingTime.earlyWindowNote(Instant.parse("2026-12-01T04:00:00Z").getEpochSecond(), false));
    }

    @Test
    void a_window_before_2000_is_noted_with_its_start_and_how_to_declare_one() {
        assertEquals("the window starts at 1999-12-31T23:59:59.999999Z, before 2000: plain-number times are seconds since"
                + " 1970-01-01T00:00:00Z; if these count from the recording's start, declare that start (JSON \"start\","
                + " CSV header \"time since <RFC 3339 time>\")", RecordingTime.earlyWindowNote(Y2000 - 1e-6, true));
        assertEquals("the window starts at 1970-01-01T00:01:00Z", RecordingTime.earlyWindowNote(60.0, true).split(",")[0]);
        assertEquals("the window starts at 1969-12-31T23:59:00Z", RecordingTime.earlyWindowNote(-60.0, true).split(",")[0]);
    }

    @Test
    void rfc_3339_times_before_2000_are_noted_as_a_clock_or_a_year_to_check() {
        assertEquals("the window starts at 1999-12-31T23:59:59Z, before 2000: check the sender's clock and the year of its"
                + " times; a unit's estimates are dated by them, and a unit whose newest recording is old shows as stale",
                RecordingTime.earlyWindowNote(Y2000 - 1, false));
    }
}
