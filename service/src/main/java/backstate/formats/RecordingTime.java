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
 * years only, seconds required, an offset required and without seconds, its hours at most 18
 * (java.time's range; RFC 3339's grammar allows 23, no zone uses more than 14). Leap second 60 is
 * refused (POSIX time has no place for it), and at most nine fraction digits are read.
 *
 * <p>Precision: a time is rounded to the nearest microsecond, ties to the later one, once, from
 * what was written (an RFC 3339 time's digits; a number's double; a declared start's digits plus
 * the number after it). A double is on a grid of 2^-20 s ≈ 0.95 µs or finer only below 2^33 s
 * from 1970 (1697-10-17 to 2242-03-16), so only there does every microsecond keep a double of its
 * own: a trace is kept from {@link #FIRST_KEPT} (year 1700) to before {@link #KEPT_END} (year 2200),
 * and refused outside. Near the present the spacing is 2^-22 s ≈ 0.24 µs, so a stored time is
 * within 0.12 µs of its microsecond.
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
    /** 1700-01-01T00:00:00Z, the earliest time a trace may hold: within 2^33 s of 1970 (see the class note). */
    static final long FIRST_KEPT = -8_520_336_000L;
    /** 2200-01-01T00:00:00Z, the first time a trace may not hold: within 2^33 s of 1970 (see the class note). */
    static final long KEPT_END = 7_258_118_400L;
    /** What a refusal of a time outside [{@link #FIRST_KEPT}, {@link #KEPT_END}) expects. */
    static final String KEPT_YEARS = "a time in the years 1700 to 2199 (where every microsecond is kept)";
    /** Beyond this many seconds from 1970 or from a start, a number is far outside the kept years and is not rounded. */
    private static final double FAR = 1e12;

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

    /**
     * Why a window starting before {@link #PLAUSIBLE_FROM} is likely misread and how to say so; null from
     * then on. Numbers of seconds most likely count from the recording's start; RFC 3339 times carry their
     * date, so a sender's clock or year is to be checked.
     */
    public static String earlyWindowNote(double windowStart, boolean timesAsNumbers) {
        if (windowStart >= PLAUSIBLE_FROM) {
            return null;
        }
        if (!timesAsNumbers) {
            return "the window starts at " + format(windowStart) + ", before 2000: check the sender's clock and the year"
                    + " of its times; a unit's estimates are dated by them, and a unit whose newest recording is old shows"
                    + " as stale";
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
        return micros(parseInstant(text));
    }

    /** Epoch microseconds of an instant, its nanoseconds rounded to the nearest microsecond (ties to the later). */
    static long micros(Instant t) {
        return t.getEpochSecond() * MICROS_PER_SECOND + (t.getNano() + NANOS_PER_MICRO / 2) / NANOS_PER_MICRO;
    }

    /**
     * The instant an RFC 3339 time names, to its nanosecond.
     *
     * @throws DateTimeParseException if the text is not an RFC 3339 date-time with offset
     */
    public static Instant parseInstant(String text) {
        return OffsetDateTime.parse(text, RFC_3339).toInstant();
    }

    /** Seconds of a whole number of epoch microseconds. */
    public static double seconds(long micros) {
        return micros / MICROS;
    }

    /** The nearest whole microsecond; whole seconds (most traces' times) are returned at once. */
    static double toMicrosecond(double seconds) {
        return seconds == Math.rint(seconds) ? seconds : toMicrosecond(0, 0, seconds);
    }

    /**
     * {@code seconds} after the origin (whole epoch seconds plus nanoseconds) on the microsecond grid,
     * rounded once: the whole seconds are added exactly in a long, and the rest (the origin's
     * nanoseconds and the number's fraction, which {@code seconds - floor(seconds)} gives exactly)
     * is rounded to its microsecond. A number beyond {@link #FAR} is added as a double, far outside
     * the kept years, instead of overflowing a long.
     */
    static double toMicrosecond(long originSecond, int originNanos, double seconds) {
        if (!(Math.abs(seconds) < FAR)) {
            return originSecond + seconds;
        }
        double whole = Math.floor(seconds);
        double fractionMicros = originNanos / (double) NANOS_PER_MICRO + (seconds - whole) * MICROS;
        long micros = (originSecond + (long) whole) * MICROS_PER_SECOND + (long) Math.floor(fractionMicros + 0.5);
        return micros / MICROS;
    }

    /** True when RFC 3339 can write the time (years 0000 to 9999). */
    static boolean writable(double seconds) {
        return seconds >= EARLIEST && seconds < END;
    }

    /** True when a trace may hold the time: years 1700 to 2199, where every microsecond has a double of its own. */
    static boolean kept(double seconds) {
        return seconds >= FIRST_KEPT && seconds < KEPT_END;
    }

    /** {@link #kept(double)} for epoch microseconds. */
    static boolean kept(long micros) {
        return micros >= FIRST_KEPT * MICROS_PER_SECOND && micros < KEPT_END * MICROS_PER_SECOND;
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
