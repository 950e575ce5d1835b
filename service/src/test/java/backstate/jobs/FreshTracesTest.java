package backstate.jobs;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.estimation.Trace;
import backstate.formats.ParsedTrace;
import backstate.formats.TraceOptions;
import backstate.store.TraceRef;
import java.time.Instant;
import java.util.Optional;
import java.util.concurrent.atomic.AtomicLong;
import org.junit.jupiter.api.Test;

/** The in-memory handoff from a post to its job: handed out once, bounded by size and by age. */
class FreshTracesTest {
    private final AtomicLong now = new AtomicLong();
    private final FreshTraces fresh = new FreshTraces(now::get);

    @Test
    void a_kept_trace_is_handed_out_once() {
        StoredTraceSolver.Loaded t = trace("t1", 10);
        assertTrue(fresh.offer(t));
        assertFalse(fresh.offer(t), "the same trace is not kept twice");
        assertSame(t, fresh.take("t1").orElseThrow());
        assertEquals(Optional.empty(), fresh.take("t1"));
        assertEquals(0, fresh.valuesHeld());
    }

    @Test
    void when_full_newcomers_are_refused_and_the_oldest_stay() {
        // 3 columns (time, one output, one input) per sample.
        long perTrace = 3L * 1_000_000;
        assertTrue(fresh.offer(trace("old", 1_000_000)));
        assertTrue(fresh.offer(trace("mid", 1_000_000)));
        assertEquals(2 * perTrace, fresh.valuesHeld());
        assertFalse(fresh.offer(trace("new", 1)), "one more value would pass " + FreshTraces.MAX_VALUES);
        assertTrue(fresh.take("old").isPresent());
        assertTrue(fresh.offer(trace("new", 1)), "room again once the oldest is taken");
        assertEquals(perTrace + 3, fresh.valuesHeld());
    }

    @Test
    void an_entry_older_than_the_age_bound_is_dropped_at_the_next_offer() {
        assertTrue(fresh.offer(trace("stale", 100)));
        now.addAndGet(FreshTraces.MAX_AGE_NANOS);
        assertTrue(fresh.offer(trace("young", 100)));
        assertEquals(2 * 300, fresh.valuesHeld(), "exactly at the bound the first is still kept");
        now.addAndGet(1);
        assertTrue(fresh.offer(trace("later", 100)));
        assertEquals(Optional.empty(), fresh.take("stale"));
        assertTrue(fresh.take("young").isPresent());
        assertEquals(300, fresh.valuesHeld());
    }

    private static StoredTraceSolver.Loaded trace(String id, int samples) {
        double[] times = new double[samples];
        for (int k = 0; k < samples; k++) {
            times[k] = k;
        }
        Trace t = new Trace(times, new double[samples], new double[samples], 1, 1, null);
        return new StoredTraceSolver.Loaded(new TraceRef(id, "U-1", "f", 1, Instant.EPOCH), null,
                new ParsedTrace(t, TraceOptions.NONE));
    }
}
