package backstate.jobs;

import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.Optional;
import java.util.function.LongSupplier;

/**
 * Traces just stored by a post, kept in memory for the job that solves them, so the job need not
 * read back and decode what the post has just parsed (for a 10⁶-sample upload that read is tens
 * of megabytes). Only an optimisation: the stored row stays the durable copy, a job that finds
 * nothing here reads it, and a crash loses nothing but this shortcut.
 *
 * <p>Bounded by the values held ({@link #MAX_VALUES}) and by age ({@link #MAX_AGE_NANOS}). When
 * full it refuses newcomers rather than evicting: the oldest entries belong to the oldest queued
 * jobs, which the workers claim first. A job can run before its post has kept its trace here (the
 * post keeps it after its commit, and a worker may claim in between); it then reads the row, and
 * the late entry waits out its age, dropped at the next offer after that.
 */
final class FreshTraces {
    /** Doubles held at most (~48 MB): room for one 10⁶-sample trace with five columns. */
    static final long MAX_VALUES = 6_000_000;
    /** An entry older than this belongs to a job that was cancelled, failed, or went elsewhere. */
    static final long MAX_AGE_NANOS = 60_000_000_000L;

    private final LongSupplier nanoTime;
    private final Map<String, Entry> entries = new LinkedHashMap<>();
    private long values;

    FreshTraces(LongSupplier nanoTime) {
        this.nanoTime = nanoTime;
    }

    private record Entry(StoredTraceSolver.Loaded trace, long values, long keptAtNanos) {
    }

    /** Keeps a stored trace for its job, unless that would pass the bound; returns whether it was kept. */
    synchronized boolean offer(StoredTraceSolver.Loaded trace) {
        long now = nanoTime.getAsLong();
        dropOlderThan(now - MAX_AGE_NANOS);
        long size = valuesOf(trace);
        if (values + size > MAX_VALUES || entries.containsKey(trace.ref().id())) {
            return false;
        }
        entries.put(trace.ref().id(), new Entry(trace, size, now));
        values += size;
        return true;
    }

    /** The trace kept for this ID, removed so it is handed out once. */
    synchronized Optional<StoredTraceSolver.Loaded> take(String traceId) {
        Entry e = entries.remove(traceId);
        if (e == null) {
            return Optional.empty();
        }
        values -= e.values();
        return Optional.of(e.trace());
    }

    synchronized long valuesHeld() {
        return values;
    }

    private void dropOlderThan(long cutoffNanos) {
        Iterator<Entry> it = entries.values().iterator();
        while (it.hasNext()) {
            Entry e = it.next();
            if (e.keptAtNanos() - cutoffNanos >= 0) {
                return; // insertion order is age order
            }
            values -= e.values();
            it.remove();
        }
    }

    private static long valuesOf(StoredTraceSolver.Loaded trace) {
        var t = trace.parsed().trace();
        return (long) t.samples() * (1 + t.outputCount() + t.inputCount());
    }
}
