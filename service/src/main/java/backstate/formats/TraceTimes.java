package backstate.formats;

import backstate.estimation.ModelException;
import backstate.text.Figure;
import java.time.Instant;
import java.util.concurrent.Future;

/**
 * A trace's time column while it is read, and the clock it is written on. A trace writes its
 * times in one of three forms, decided by its first time and its declaration of a start:
 * <ul>
 *   <li>RFC 3339 times ({@link RecordingTime#RFC_3339});
 *   <li>numbers with no start declared: seconds since 1970-01-01T00:00:00Z;
 *   <li>numbers with a start declared (RFC 3339): seconds since that start.
 * </ul>
 * All become epoch seconds on the microsecond grid ({@link RecordingTime}) when the trace is
 * assembled. A trace that mixes numbers and RFC 3339 times is refused (400) at the first time of
 * the other kind, and a time not after the one before it (422) where it stands; the reader names
 * the row.
 */
final class TraceTimes {
    /** How the trace writes its times; decided by the first. */
    private enum Kind { UNDECIDED, SECONDS, TIMESTAMPS }

    /**
     * Times from this many on are normalised in two halves, one on a helper thread: a few
     * milliseconds of work each, against a hand-over far below one.
     */
    static final int TWO_HALVES_FROM = 100_000;

    private final DoubleColumn values;
    private Kind kind = Kind.UNDECIDED;
    /** The last time added, while {@code values} is not empty. */
    private double last;
    /** The declared start, to its nanosecond (rounded only with each number after it), or null. */
    private Instant start;
    private String startField;

    TraceTimes(int limit) {
        this.values = new DoubleColumn("time", limit);
    }

    int size() {
        return values.size();
    }

    /** True when the trace writes its times as numbers of seconds, false for RFC 3339 times. */
    boolean numbers() {
        return kind != Kind.TIMESTAMPS;
    }

    /**
     * Adds the next time: a number of seconds, or an RFC 3339 time in epoch seconds. False, adding
     * nothing, when it is of the other kind than the first time or not after the time before it;
     * the caller then throws {@link #refusal} naming the row.
     */
    boolean add(double seconds, boolean timestamp) {
        Kind k = timestamp ? Kind.TIMESTAMPS : Kind.SECONDS;
        if (k != kind) {
            if (kind != Kind.UNDECIDED) {
                return false;
            }
            kind = k;
        }
        if (values.size() > 0 && !(seconds > last)) {
            return false;
        }
        values.add(seconds);
        last = seconds;
        return true;
    }

    /**
     * Appends times read apart, as {@link #add} would one by one. False, appending nothing, when
     * they are of the other kind than this trace's, their first is not after this trace's last,
     * or they would pass the sample limit; {@link #add} then finds the refusal where it stands.
     */
    boolean appendAll(TraceTimes more) {
        if (more.size() == 0) {
            return true;
        }
        boolean otherKind = kind != Kind.UNDECIDED && more.kind != kind;
        boolean notAfter = size() > 0 && !(more.values.get(0) > last);
        if (otherKind || notAfter || (long) size() + more.size() > values.limit()) {
            return false;
        }
        kind = more.kind;
        values.addAll(more.values);
        last = more.last;
        return true;
    }

    /** Where the times stand, to go back to ({@link #rollBack}). */
    record Mark(int size, Kind kind, double last) {
    }

    Mark mark() {
        return new Mark(size(), kind, last);
    }

    /** Back to where {@code mark} was taken: later times dropped, the kind as it was then. */
    void rollBack(Mark mark) {
        values.truncate(mark.size());
        kind = mark.kind();
        last = mark.last();
    }

    /** Empty again, of no kind yet, keeping the first segment of room (for times read apart, block after block). */
    void clear() {
        rollBack(new Mark(0, Kind.UNDECIDED, 0));
    }

    /** Why {@link #add} refused this time, as the exception for the row named {@code field}. */
    RuntimeException refusal(String field, double seconds, boolean timestamp) {
        if (kind != (timestamp ? Kind.TIMESTAMPS : Kind.SECONDS)) {
            return new InputException(field, "got " + (timestamp ? "an RFC 3339 time" : "a number")
                    + " where the trace's first time is " + (timestamp ? "a number" : "an RFC 3339 time")
                    + ", expected every time of a trace in one form");
        }
        double before = values.get(values.size() - 1);
        if (timestamp && seconds == before) {
            return new ModelException(field, "got " + show(seconds) + " again (times are kept to the microsecond),"
                    + " expected times at least 1 µs apart");
        }
        return new ModelException(field, "got " + show(seconds) + " after " + show(before)
                + ", expected strictly increasing times");
    }

    /** Declares the start that numeric times count from. */
    void declareStart(Instant declared, String field) {
        if (start != null) {
            throw new InputException(field, "got a second start, expected at most one");
        }
        start = declared;
        startField = field;
    }

    /**
     * A number in the trace's own frame (seconds since the start, or since 1970 without one) as
     * epoch seconds on the microsecond grid, as the times themselves become.
     */
    double normalise(double seconds) {
        return start == null ? RecordingTime.toMicrosecond(seconds)
                : RecordingTime.toMicrosecond(start.getEpochSecond(), start.getNano(), seconds);
    }

    /**
     * The times as epoch seconds on the microsecond grid, checked to be in the kept years and increasing
     * there; the times as read are handed over, so call it once, when the trace is complete. From
     * {@value #TWO_HALVES_FROM} times the later half is normalised on a helper thread
     * ({@link ParseHelpers}) while this one does the first; the refusal is the first time's either
     * way.
     */
    double[] normalised() {
        if (kind == Kind.TIMESTAMPS && start != null) {
            throw new InputException(startField, "got a start with RFC 3339 times, expected a start only with times"
                    + " in seconds since it");
        }
        int n = values.size();
        double[] out = new double[n];
        double[][] segments = values.takeSegments();
        int segmentCount = (n + DoubleColumn.SEGMENT - 1) >>> DoubleColumn.SEGMENT_BITS;
        int split = n >= TWO_HALVES_FROM ? segmentCount / 2 : segmentCount;
        double laterFirstAsRead = split < segmentCount ? segments[split][0] : Double.NaN;
        Future<Unfit> later = split < segmentCount
                ? ParseHelpers.start(ParseHelpers.POOL, () -> normalise(segments, split, segmentCount, n, out)) : null;
        Unfit first = normalise(segments, 0, later == null ? segmentCount : split, n, out);
        Unfit second = later == null ? null : ParseHelpers.await(later);
        if (first == null && later != null) {
            int k = split << DoubleColumn.SEGMENT_BITS;
            first = second != null && second.index() == k ? second : unfitAfter(out, k, laterFirstAsRead);
            first = first != null ? first : second;
        }
        if (first != null) {
            throw first.refusal();
        }
        return out;
    }

    /** The first time that may not be kept, as read, and what is wrong with it. */
    private record Unfit(int index, double asRead, boolean outsideKept, TraceTimes times) {
        RuntimeException refusal() {
            if (outsideKept) {
                return new InputException("time[" + index + "]", "got " + times.shownAsRead(asRead) + ", expected "
                        + RecordingTime.KEPT_YEARS);
            }
            return new ModelException("time[" + index + "]", "got " + times.show(asRead) + ", within 1 µs of the time before it,"
                    + " expected times at least 1 µs apart");
        }
    }

    /**
     * Normalises the times of segments [from, to) into {@code out}, letting go of each segment once
     * read; the first outside the kept years, or (past the range's first) not after the one before.
     */
    private Unfit normalise(double[][] segments, int from, int to, int n, double[] out) {
        Unfit unfit = null;
        for (int s = from; s < to; s++) {
            double[] segment = segments[s];
            segments[s] = null;
            int base = s << DoubleColumn.SEGMENT_BITS;
            int count = Math.min(DoubleColumn.SEGMENT, n - base);
            for (int i = 0; i < count; i++) {
                int k = base + i;
                double v = segment[i];
                out[k] = kind == Kind.TIMESTAMPS ? v : normalise(v);
                if (unfit == null && !RecordingTime.kept(out[k])) {
                    unfit = new Unfit(k, v, true, this);
                } else if (unfit == null && k > from << DoubleColumn.SEGMENT_BITS && !(out[k] > out[k - 1])) {
                    unfit = unfitAfter(out, k, v);
                }
            }
        }
        return unfit;
    }

    /** Time k, read as {@code asRead}, when it is not after the time before it; null when it is. */
    private Unfit unfitAfter(double[] out, int k, double asRead) {
        return out[k] > out[k - 1] ? null : new Unfit(k, asRead, false, this);
    }

    /**
     * A time outside the kept years as the trace wrote it: RFC 3339, or its number of seconds and
     * what they count from, in plain digits where they are few ("-9000000000 s since 1970", "1e20 s
     * after the start").
     */
    private String shownAsRead(double asRead) {
        if (kind == Kind.TIMESTAMPS) {
            return RecordingTime.format(asRead);
        }
        return (Math.abs(asRead) < 1e15 ? Figure.plain(asRead) : Figure.of(asRead))
                + (start == null ? " s since 1970-01-01T00:00:00Z" : " s after the start");
    }

    /** A time as the trace wrote it: RFC 3339, or its number of seconds in plain digits (not "1.79E9"). */
    private String show(double seconds) {
        return kind == Kind.TIMESTAMPS ? RecordingTime.format(seconds)
                : Figure.plain(seconds) + " s";
    }
}
