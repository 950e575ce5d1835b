package backstate.formats;

import backstate.text.Figure;
import java.time.Duration;
import java.time.Instant;
import java.time.OffsetDateTime;
import java.time.chrono.IsoChronology;
import java.time.format.DateTimeFormatter;
import java.time.format.DateTimeFormatterBuilder;
import java.time.format.DateTimeParseException;
import java.time.format.ResolverStyle;
import java.time.temporal.ChronoField;

/**
 * When a trace was recorded, as the service keeps it: seconds since 1970-01-01T00:00:00Z (UTC,
 * no leap seconds, as POSIX time counts) on a grid of whole microseconds, in a double.
 *
 * <p>Written by users as RFC 3339 date-times (RFC 3339 §5.6: {@code full-date "T" full-time},
 * seconds required, offset {@code Z} or {@code ±hh:mm}, "T" and "Z" in either case) or as numbers
 * of seconds. {@link #RFC_3339} is java.time's ISO formatter narrowed to that grammar: four-digit
 * years only, seconds required, an offset required and without seconds. Leap second 60 is refused
 * (POSIX time has no place for it), and at most nine fraction digits are read.
 *
 * <p>Precision: a time is rounded to the nearest microsecond, ties to the later one. A double
 * holds every microsecond exactly only below 2^53 µs (year 2255); near the present its spacing is
 * 2^-22 s ≈ 0.24 µs, so a stored time is within 0.12 µs of its microsecond.
 */
public final class RecordingTime {
    /** RFC 3339 §5.6 date-time, parsed by java.time. */
    public static final DateTimeFormatter RFC_3339 = new DateTimeFormatterBuilder()
            .parseCaseInsensitive()
            .appendValue(ChronoField.YEAR, 4).appendLiteral('-')
            .appendValue(ChronoField.MONTH_OF_YEAR, 2).appendLiteral('-')
            .appendValue(ChronoField.DAY_OF_MONTH, 2).appendLiteral('T')
            .appendValue(ChronoField.HOUR_OF_DAY, 2).appendLiteral(':')
            .appendValue(ChronoField.MINUTE_OF_HOUR, 2).appendLiteral(':')
            .appendValue(ChronoField.SECOND_OF_MINUTE, 2)
            .optionalStart().appendFraction(ChronoField.NANO_OF_SECOND, 1, 9, true).optionalEnd()
            .appendOffset("+HH:MM", "Z")
            .toFormatter()
            .withResolverStyle(ResolverStyle.STRICT)
            .withChronology(IsoChronology.INSTANCE);

    /** What an error message shows as the expected form. */
    public static final String EXAMPLE = "an RFC 3339 time with offset such as 2026-12-01T06:00:00+02:00 or 2026-12-01T04:00:00.5Z";

    static final long MICROS_PER_SECOND = 1_000_000L;
    private static final double MICROS = MICROS_PER_SECOND;
    private static final long NANOS_PER_MICRO = 1000L;
    /** 0000-01-01T00:00:00Z, the earliest time RFC 3339 can write. */
    static final double EARLIEST = -62_167_219_200.0;
    /** 10000-01-01T00:00:00Z, the first time RFC 3339 cannot write. */
    static final double END = 253_402_300_800.0;

    /**
     * 2000-01-01T00:00:00Z. A window starting before it almost always holds times that count from the
     * recording's own start, read (as documented) as seconds since 1970: its estimates would be dated
     * 1970 and its unit shown as stale. Such a trace is taken, with {@link #earlyWindowNote}.
     */
    public static final double PLAUSIBLE_FROM = 946_684_800.0;

    /**
     * How far past the service's clock a window may end before it is taken with {@link #lateWindowNote}:
     * room for senders' clocks that run a little fast, not for a wrong zone or a wrong year (common
     * practice, no source).
     */
    public static final Duration FUTURE_SLACK = Duration.ofMinutes(10);

    private RecordingTime() {
    }

    /**
     * Why a window ending more than {@link #FUTURE_SLACK} after {@code now} is likely misdated (a sender's
     * clock or the times' zone) and what it does to the unit; null otherwise.
     */
    public static String lateWindowNote(double windowEnd, Instant now) {
        if (windowEnd <= now.plus(FUTURE_SLACK).getEpochSecond()) {
            return null;
        }
        return "the window ends at " + words(windowEnd) + ", after the service's clock (" + now + "): check the sender's"
                + " clock and the zone of the times; a unit's latest estimate is its newest recording, so this one stays"
                + " the latest until a later recording arrives";
    }

    /** Why a window starting before {@link #PLAUSIBLE_FROM} is likely misread and how to say so; null from then on. */
    public static String earlyWindowNote(double windowStart) {
        if (windowStart >= PLAUSIBLE_FROM) {
            return null;
        }
        return "the window starts at " + format(windowStart) + ", before 2000: plain-number times are seconds since "
                + "1970-01-01T00:00:00Z; if these count from the recording's start, declare that start (JSON \"start\", "
                + "CSV header \"time since <RFC 3339 time>\")";
    }

    /**
     * Epoch microseconds of an RFC 3339 time, the fraction rounded to the nearest microsecond.
     *
     * @throws DateTimeParseException if the text is not an RFC 3339 date-time with offset
     */
    public static long parseMicros(String text) {
        Instant t = OffsetDateTime.parse(text, RFC_3339).toInstant();
        return t.getEpochSecond() * MICROS_PER_SECOND + (t.getNano() + NANOS_PER_MICRO / 2) / NANOS_PER_MICRO;
    }

    /** Seconds of a whole number of epoch microseconds. */
    public static double seconds(long micros) {
        return micros / MICROS;
    }

    /** The nearest whole microsecond; whole seconds (most traces' times) are returned at once. */
    static double toMicrosecond(double seconds) {
        return seconds == Math.rint(seconds) ? seconds : Math.round(seconds * MICROS) / MICROS;
    }

    /** Seconds + offset micros on the microsecond grid, exactly: the sum is formed in whole microseconds. */
    static double toMicrosecond(long originMicros, double seconds) {
        return (originMicros + Math.round(seconds * MICROS)) / MICROS;
    }

    /** True when RFC 3339 can write the time (years 0000 to 9999). */
    static boolean writable(double seconds) {
        return seconds >= EARLIEST && seconds < END;
    }

    /**
     * A time for a sentence: RFC 3339 ({@link #format}) where it can be written, else seconds since
     * 1970 ("1e300 s since 1970-01-01T00:00:00Z"), never a saturated date.
     */
    public static String words(double seconds) {
        return writable(seconds) ? format(seconds) : Figure.of(seconds) + " s since 1970-01-01T00:00:00Z";
    }

    /**
     * The time as RFC 3339 in UTC ({@code Z}), with as many fraction digits as its microsecond
     * needs in groups of three (none, milliseconds or microseconds), as {@link Instant#toString} writes.
     * Total: a value beyond what a long of microseconds holds saturates instead of failing.
     */
    public static String format(double seconds) {
        long micros = Math.round(seconds * MICROS);
        return Instant.ofEpochSecond(Math.floorDiv(micros, MICROS_PER_SECOND),
                Math.floorMod(micros, MICROS_PER_SECOND) * NANOS_PER_MICRO).toString();
    }
}
