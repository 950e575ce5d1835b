package backstate.formats;

import java.util.concurrent.Callable;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.Executor;
import java.util.concurrent.Future;
import java.util.concurrent.FutureTask;
import java.util.concurrent.RejectedExecutionException;
import java.util.concurrent.SynchronousQueue;
import java.util.concurrent.ThreadPoolExecutor;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;

/**
 * Second threads for reading a large body: daemon threads, as many as cores, kept 30 s when idle;
 * none on a single core, where a second thread could only take turns with the first. A task
 * finding none free is refused, not queued, and its caller does the work itself, so a reader never
 * waits for a helper that is not yet working for it.
 */
final class ParseHelpers {
    static final Executor POOL = pool();

    private ParseHelpers() {
    }

    /** The task started on a helper; null when none is free. */
    static <T> Future<T> start(Executor helpers, Callable<T> work) {
        FutureTask<T> task = new FutureTask<>(work);
        try {
            helpers.execute(task);
        } catch (RejectedExecutionException e) {
            return null;
        }
        return task;
    }

    /** The task's answer; its exception rethrown as it was when unchecked. */
    static <T> T await(Future<T> task) {
        try {
            return task.get();
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException("interrupted while a helper read part of a body", e);
        } catch (ExecutionException e) {
            if (e.getCause() instanceof RuntimeException unchecked) {
                throw unchecked;
            }
            if (e.getCause() instanceof Error error) {
                throw error;
            }
            throw new IllegalStateException(e.getCause());
        }
    }

    private static Executor pool() {
        AtomicInteger count = new AtomicInteger();
        int threads = Runtime.getRuntime().availableProcessors();
        if (threads < 2) {
            return task -> {
                throw new RejectedExecutionException("one core: no helper");
            };
        }
        return new ThreadPoolExecutor(0, threads, 30, TimeUnit.SECONDS, new SynchronousQueue<>(), r -> {
            Thread t = new Thread(r, "backstate-parse-helper-" + count.incrementAndGet());
            t.setDaemon(true);
            return t;
        });
    }
}
