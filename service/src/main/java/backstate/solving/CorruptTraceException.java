package backstate.solving;

import backstate.store.CorruptDataException;
import backstate.store.TraceRef;

/**
 * A stored trace whose row reads but whose payload does not decode: the trace alone is damaged.
 * It carries the row's own columns, so a regression run can report the trace's unit as not
 * compared and go on, and an estimate job can fail naming it.
 */
public final class CorruptTraceException extends CorruptDataException {
    private final transient TraceRef ref;
    private final double windowStart;

    CorruptTraceException(TraceRef ref, double windowStart, RuntimeException cause) {
        super("trace " + ref.id(), "its payload does not decode (" + cause.getMessage() + ")", cause);
        this.ref = ref;
        this.windowStart = windowStart;
    }

    /** The trace as its row describes it. */
    public TraceRef ref() {
        return ref;
    }

    /** The first sample's time, from the row (seconds since the epoch, or since start when the clock is relative). */
    public double windowStart() {
        return windowStart;
    }
}
