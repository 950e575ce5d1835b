package backstate.store;

import java.time.Instant;

/**
 * Narrows by time, each range half-open and each null end open: recording time
 * {@code recordedFrom <= window start < recordedTo} (when the trace's first sample was taken, on
 * the unit's clock), and received time {@code receivedFrom <= received at < receivedTo} (when the
 * service took the trace in). Both ranges apply together.
 */
public record TimeFilter(Instant recordedFromOrNull, Instant recordedToOrNull, Instant receivedFromOrNull,
                         Instant receivedToOrNull) {

    /** Matches every time. */
    public static final TimeFilter NONE = new TimeFilter(null, null, null, null);

    public TimeFilter {
        requireOrdered("recorded", recordedFromOrNull, recordedToOrNull);
        requireOrdered("received", receivedFromOrNull, receivedToOrNull);
    }

    /** Only a recording-time range. */
    public static TimeFilter recorded(Instant fromOrNull, Instant toOrNull) {
        return new TimeFilter(fromOrNull, toOrNull, null, null);
    }

    /** Only a received-time range. */
    public static TimeFilter received(Instant fromOrNull, Instant toOrNull) {
        return new TimeFilter(null, null, fromOrNull, toOrNull);
    }

    private static void requireOrdered(String which, Instant from, Instant to) {
        if (from != null && to != null && from.isAfter(to)) {
            throw new IllegalArgumentException("got " + which + " from " + from + " after " + which + " to " + to
                    + ", expected from <= to");
        }
    }
}
