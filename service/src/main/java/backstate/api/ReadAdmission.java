package backstate.api;

import backstate.config.UploadLimits;
import io.javalin.http.Handler;
import io.javalin.http.HandlerType;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Timer;
import java.time.Duration;
import java.util.concurrent.Semaphore;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;

/**
 * Admits the API's reads (GET and HEAD under {@code /v1}) a few at a time, so dashboards that
 * poll without pause cannot take the CPU that trace posts and their solves need: at most
 * {@code concurrency} reads run at once and the others wait in arrival order (a fair semaphore).
 * A read that would be the {@link #MAX_WAITING}-plus-first waiting, or that waited
 * {@link #DEFAULT_MAX_WAIT}, gets 503 with Retry-After and nothing else.
 *
 * <p>Not counted: posts (their bodies are capped by {@link Uploads}), the public probes and
 * documents (a readiness check must never queue behind a dashboard), and an estimate's series,
 * whose re-solves have their own threads and queue ({@link SeriesSolves}). The access check runs
 * before admission, so a refused key never waits.
 */
final class ReadAdmission {
    /** A dashboard's request that waits this long is better answered "busy" than later. */
    static final Duration DEFAULT_MAX_WAIT = Duration.ofSeconds(10);
    /** Waiting reads hold HTTP threads: at most a quarter of them, so posts and probes always find one. */
    static final int MAX_WAITING = UploadLimits.HTTP_THREADS / 4;
    static final String WAIT_TIMER = "backstate.http.read.wait";
    private static final String SERIES_PATH = "/v1/estimates/{estimateId}/series";

    private final int concurrency;
    private final Duration maxWait;
    private final Semaphore running;
    private final AtomicInteger waiting = new AtomicInteger();
    private final Timer waits;

    ReadAdmission(int concurrency, MeterRegistry registry) {
        this(concurrency, DEFAULT_MAX_WAIT, registry);
    }

    ReadAdmission(int concurrency, Duration maxWait, MeterRegistry registry) {
        if (concurrency < 1) {
            throw new IllegalArgumentException("got read concurrency " + concurrency + ", expected >= 1");
        }
        this.concurrency = concurrency;
        this.maxWait = maxWait;
        this.running = new Semaphore(concurrency, true);
        this.waits = Timer.builder(WAIT_TIMER)
                .description("time an API read waited for one of the --read-concurrency places before it ran")
                .publishPercentileHistogram()
                .minimumExpectedValue(Duration.ofNanos(100_000))
                .maximumExpectedValue(maxWait)
                .register(registry);
    }

    /** Reads waiting for a place right now; for tests. */
    int waitingNow() {
        return waiting.get();
    }

    /** True for the routes this admits: reads under /v1 except an estimate's series. */
    static boolean counts(Route route) {
        return (route.method() == HandlerType.GET || route.method() == HandlerType.HEAD)
                && route.path().startsWith("/v1/") && !route.path().equals(SERIES_PATH);
    }

    /** {@code handler} run only once admitted, its place given back when it returns or throws. */
    Handler admitted(Handler handler) {
        return ctx -> {
            admit();
            try {
                handler.handle(ctx);
            } finally {
                running.release();
            }
        };
    }

    private void admit() throws InterruptedException {
        if (running.tryAcquire()) {
            waits.record(0, TimeUnit.NANOSECONDS);
            return;
        }
        if (waiting.incrementAndGet() > MAX_WAITING) {
            waiting.decrementAndGet();
            throw ApiProblem.busy(MAX_WAITING + " reads are already waiting for one of the " + concurrency
                    + " places --read-concurrency gives; retry later");
        }
        long start = System.nanoTime();
        boolean admitted;
        try {
            admitted = running.tryAcquire(maxWait.toNanos(), TimeUnit.NANOSECONDS);
        } finally {
            waiting.decrementAndGet();
            waits.record(System.nanoTime() - start, TimeUnit.NANOSECONDS);
        }
        if (!admitted) {
            throw ApiProblem.busy("waited " + maxWait.toMillis() + " ms for one of the " + concurrency
                    + " places --read-concurrency gives; retry later");
        }
    }
}
