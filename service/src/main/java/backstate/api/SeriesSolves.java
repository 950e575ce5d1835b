package backstate.api;

import java.util.concurrent.ArrayBlockingQueue;
import java.util.concurrent.BlockingQueue;
import java.util.concurrent.Callable;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.Future;
import java.util.concurrent.RejectedExecutionException;
import java.util.concurrent.SynchronousQueue;
import java.util.concurrent.ThreadPoolExecutor;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;

/**
 * The re-solves behind {@code GET /v1/estimates/{id}/series}, on a fixed number of threads with a
 * bounded queue: a series solves the whole stored trace again (tens of milliseconds to seconds), so
 * a burst of plot requests must not take every web-server thread and core. Past threads + queue a
 * request is answered 503 with Retry-After, like a full job queue.
 */
public final class SeriesSolves implements AutoCloseable {
    private final ThreadPoolExecutor pool;

    /** {@code threads} solves at once, {@code queue} more waiting (0: none wait). */
    public SeriesSolves(int threads, int queue) {
        if (threads < 1 || queue < 0) {
            throw new IllegalArgumentException("got threads " + threads + " and queue " + queue
                    + ", expected threads >= 1 and queue >= 0");
        }
        BlockingQueue<Runnable> waiting = queue == 0 ? new SynchronousQueue<>() : new ArrayBlockingQueue<>(queue);
        AtomicInteger count = new AtomicInteger();
        this.pool = new ThreadPoolExecutor(threads, threads, 0, TimeUnit.SECONDS, waiting, r -> {
            Thread t = new Thread(r, "backstate-series-" + count.incrementAndGet());
            t.setDaemon(true);
            return t;
        });
    }

    /** Runs the solve on the pool and waits for it; a full pool is a 503 (service busy). */
    <T> T run(Callable<T> solve) throws Exception {
        Future<T> pending = start(solve);
        try {
            return pending.get();
        } catch (ExecutionException e) {
            throw e.getCause() instanceof Exception cause ? cause : e;
        } catch (InterruptedException e) {
            pending.cancel(true);
            Thread.currentThread().interrupt();
            throw e;
        }
    }

    /** Queues the solve without waiting for it; a full pool is a 503 (service busy). */
    <T> Future<T> start(Callable<T> solve) {
        try {
            return pool.submit(solve);
        } catch (RejectedExecutionException full) {
            throw ApiProblem.busy("every series solve slot is taken; retry later");
        }
    }

    @Override
    public void close() {
        pool.shutdownNow();
    }
}
