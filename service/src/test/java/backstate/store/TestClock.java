package backstate.store;

import java.time.Clock;
import java.time.Duration;
import java.time.Instant;
import java.time.ZoneId;
import java.time.ZoneOffset;
import java.util.concurrent.atomic.AtomicReference;

/** A clock that stands still until a test moves it; safe to read from worker threads. */
public final class TestClock extends Clock {

    private final AtomicReference<Instant> now;

    public TestClock(Instant start) {
        this.now = new AtomicReference<>(start);
    }

    public Instant advance(Duration step) {
        return now.updateAndGet(t -> t.plus(step));
    }

    @Override
    public Instant instant() {
        return now.get();
    }

    @Override
    public ZoneId getZone() {
        return ZoneOffset.UTC;
    }

    @Override
    public Clock withZone(ZoneId zone) {
        throw new UnsupportedOperationException("got withZone(" + zone + "), expected UTC only");
    }
}
