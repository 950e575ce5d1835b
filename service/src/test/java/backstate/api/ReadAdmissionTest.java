package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.javalin.http.Handler;
import io.javalin.http.HandlerType;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.Test;

/** Reads admitted a few at a time: the rest wait in turn, and too many or too long a wait is 503. */
class ReadAdmissionTest {
    private static final long WAIT_SECONDS = 10;
    private final ExecutorService callers = Executors.newCachedThreadPool();
    private final SimpleMeterRegistry registry = new SimpleMeterRegistry();
    private final CountDownLatch release = new CountDownLatch(1);
    private final AtomicInteger inside = new AtomicInteger();
    private final AtomicInteger mostInside = new AtomicInteger();

    @AfterEach
    void stop() {
        release.countDown();
        callers.shutdownNow();
    }

    @Test
    void api_reads_count_and_posts_probes_and_the_series_do_not() {
        assertTrue(ReadAdmission.counts(route(HandlerType.GET, "/v1/fleet/{family}/summary")));
        assertTrue(ReadAdmission.counts(route(HandlerType.HEAD, "/v1/units/{unitId}/estimates/latest")));
        assertFalse(ReadAdmission.counts(route(HandlerType.POST, "/v1/units/{unitId}/traces")));
        assertFalse(ReadAdmission.counts(route(HandlerType.GET, "/readyz")));
        assertFalse(ReadAdmission.counts(route(HandlerType.GET, "/metrics")));
        assertFalse(ReadAdmission.counts(route(HandlerType.GET, "/v1/estimates/{estimateId}/series")));
    }

    @Test
    void no_more_than_the_concurrency_run_at_once_and_every_waiting_read_runs_in_the_end() throws Exception {
        ReadAdmission reads = new ReadAdmission(2, Duration.ofSeconds(WAIT_SECONDS), registry);
        Handler held = reads.admitted(ctx -> hold());
        List<Future<Object>> calls = new ArrayList<>();
        for (int i = 0; i < 6; i++) {
            calls.add(callers.submit(() -> run(held)));
        }
        awaitUntil(() -> inside.get() == 2);
        Thread.sleep(50); // a third would have entered by now if admission let it
        assertEquals(2, inside.get());
        release.countDown();
        for (Future<Object> f : calls) {
            f.get(WAIT_SECONDS, TimeUnit.SECONDS);
        }
        assertEquals(2, mostInside.get());
        assertEquals(6, registry.get(ReadAdmission.WAIT_TIMER).timer().count());
    }

    @Test
    void a_read_that_waits_past_the_longest_wait_gets_503_naming_the_setting() throws Exception {
        ReadAdmission reads = new ReadAdmission(1, Duration.ofMillis(50), registry);
        Handler held = reads.admitted(ctx -> hold());
        callers.submit(() -> run(held));
        awaitUntil(() -> inside.get() == 1);
        ApiProblem busy = assertInstanceOf(ApiProblem.class, assertThrows(Exception.class, () -> held.handle(null)));
        assertEquals(503, busy.status());
        assertTrue(busy.getMessage().contains("--read-concurrency"), busy.getMessage());
    }

    @Test
    void past_the_waiting_cap_a_read_gets_503_at_once_and_a_failed_read_gives_its_place_back() throws Exception {
        ReadAdmission reads = new ReadAdmission(1, Duration.ofSeconds(WAIT_SECONDS), registry);
        Handler held = reads.admitted(ctx -> hold());
        List<Future<Object>> calls = new ArrayList<>();
        calls.add(callers.submit(() -> run(held)));
        awaitUntil(() -> inside.get() == 1);
        for (int i = 0; i < ReadAdmission.MAX_WAITING; i++) {
            calls.add(callers.submit(() -> run(held)));
        }
        awaitUntil(() -> reads.waitingNow() == ReadAdmission.MAX_WAITING);
        long start = System.nanoTime();
        ApiProblem busy = assertInstanceOf(ApiProblem.class, assertThrows(Exception.class, () -> held.handle(null)));
        assertTrue(System.nanoTime() - start < TimeUnit.SECONDS.toNanos(WAIT_SECONDS / 2), "refused without waiting");
        assertTrue(busy.getMessage().contains(ReadAdmission.MAX_WAITING + " reads are already waiting"), busy.getMessage());
        release.countDown();
        for (Future<Object> f : calls) {
            f.get(WAIT_SECONDS, TimeUnit.SECONDS);
        }
        Handler failing = reads.admitted(ctx -> {
            throw new IllegalStateException("refused");
        });
        assertThrows(IllegalStateException.class, () -> failing.handle(null));
        assertThrows(IllegalStateException.class, () -> failing.handle(null)); // its place came back
    }

    private Object run(Handler h) throws Exception {
        h.handle(null);
        return null;
    }

    private void hold() throws InterruptedException {
        mostInside.accumulateAndGet(inside.incrementAndGet(), Math::max);
        try {
            assertTrue(release.await(WAIT_SECONDS, TimeUnit.SECONDS));
        } finally {
            inside.decrementAndGet();
        }
    }

    private static Route route(HandlerType method, String path) {
        return new Route(method, path, Access.READER, ctx -> { });
    }

    private static void awaitUntil(java.util.function.BooleanSupplier condition) throws InterruptedException {
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(WAIT_SECONDS);
        while (!condition.getAsBoolean()) {
            assertTrue(System.nanoTime() < deadline, "waited " + WAIT_SECONDS + " s");
            Thread.sleep(1);
        }
    }
}
