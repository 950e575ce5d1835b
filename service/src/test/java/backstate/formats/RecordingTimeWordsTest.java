package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.time.Instant;
import org.junit.jupiter.api.Test;

/** Times in sentences: RFC 3339 from year 0000 to 9999 (java.time's Instant gives the checks), seconds beyond. */
class RecordingTimeWordsTest {
    @Test
    void a_time_rfc_3339_can_write_is_written_so_and_one_beyond_it_in_seconds_since_1970() {
        double lastSecond = Instant.parse("9999-12-31T23:59:59Z").getEpochSecond();
        double firstSecond = Instant.parse("0000-01-01T00:00:00Z").getEpochSecond();
        assertEquals("9999-12-31T23:59:59Z", RecordingTime.words(lastSecond));
        assertEquals("0000-01-01T00:00:00Z", RecordingTime.words(firstSecond));
        assertEquals("2026-12-01T06:00:00.500Z", RecordingTime.words(Instant.parse("2026-12-01T06:00:00.5Z").getEpochSecond() + 0.5));
        assertEquals("2.53e11 s since 1970-01-01T00:00:00Z", RecordingTime.words(lastSecond + 1));
        assertEquals("-6.22e10 s since 1970-01-01T00:00:00Z", RecordingTime.words(firstSecond - 1));
        assertEquals("1e300 s since 1970-01-01T00:00:00Z", RecordingTime.words(1e300));
        assertEquals("Infinity s since 1970-01-01T00:00:00Z", RecordingTime.words(Double.POSITIVE_INFINITY));
    }
}
