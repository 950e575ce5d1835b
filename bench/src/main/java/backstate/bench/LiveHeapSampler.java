package backstate.bench;

import java.lang.management.ManagementFactory;
import java.lang.management.MemoryPoolMXBean;
import java.lang.management.MemoryType;
import java.util.List;
import java.util.stream.Collectors;

/**
 * Samples the live heap while a piece of work runs: a daemon thread forces a full collection every
 * {@link #INTERVAL_MILLIS} and reads the heap pools' usage after it ({@code getCollectionUsage}),
 * which counts reachable objects only, unlike "used" which also counts garbage not yet collected.
 *
 * <p>The forced collections slow the work down, so a sampled run is never a timed run.
 */
final class LiveHeapSampler implements AutoCloseable {
    /** Time between forced collections: several samples inside a 0.1 s solve, little overhead on a 1 s one. */
    static final long INTERVAL_MILLIS = 20;

    private final List<MemoryPoolMXBean> heapPools = ManagementFactory.getMemoryPoolMXBeans().stream()
            .filter(pool -> pool.getType() == MemoryType.HEAP && pool.getCollectionUsage() != null)
            .collect(Collectors.toList());
    private final Thread thread;
    private volatile boolean running = true;
    private volatile long peakBytes;
    private volatile int samples;

    private LiveHeapSampler() {
        thread = new Thread(this::loop, "live-heap-sampler");
        thread.setDaemon(true);
    }

    /** Bytes reachable after a full collection, now. */
    static long liveBytes() {
        LiveHeapSampler probe = new LiveHeapSampler();
        return probe.collectAndMeasure();
    }

    static LiveHeapSampler start() {
        LiveHeapSampler sampler = new LiveHeapSampler();
        sampler.thread.start();
        return sampler;
    }

    /** Largest live heap seen so far, in bytes. */
    long peakBytes() {
        return peakBytes;
    }

    int samples() {
        return samples;
    }

    /** Stops sampling after one last sample, taken while the caller still holds the work's result. */
    @Override
    public void close() {
        running = false;
        try {
            thread.join();
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
        record(collectAndMeasure());
    }

    private void loop() {
        while (running) {
            record(collectAndMeasure());
            try {
                Thread.sleep(INTERVAL_MILLIS);
            } catch (InterruptedException e) {
                return;
            }
        }
    }

    private synchronized void record(long bytes) {
        peakBytes = Math.max(peakBytes, bytes);
        samples++;
    }

    private long collectAndMeasure() {
        System.gc();
        long sum = 0;
        for (MemoryPoolMXBean pool : heapPools) {
            sum += pool.getCollectionUsage().getUsed();
        }
        return sum;
    }
}
