package backstate.api;

import backstate.config.UploadLimits;
import io.javalin.config.Key;
import io.javalin.http.Context;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.Semaphore;

/**
 * Permits to read a request body: at most {@link UploadLimits#maxUploads()} at once in total and
 * {@link UploadLimits#maxUploadsPerKey()} per API key (per client address with access control
 * off). A request past either gets 503 with Retry-After before any of its body is read, so slow
 * uploads can hold at most that many HTTP threads.
 */
final class Uploads {
    /** Where the routes' body reader finds the permits (Javalin app data). */
    static final Key<Uploads> KEY = new Key<>("backstate.uploads");

    private final UploadLimits limits;
    private final Semaphore total;
    private final ConcurrentHashMap<String, Integer> perCaller = new ConcurrentHashMap<>();

    Uploads(UploadLimits limits) {
        this.limits = limits;
        this.total = new Semaphore(limits.maxUploads());
    }

    UploadLimits limits() {
        return limits;
    }

    /** A held permit; {@link #close()} gives it back, once. */
    final class Permit implements AutoCloseable {
        private final String caller;
        private boolean open = true;

        private Permit(String caller) {
            this.caller = caller;
        }

        @Override
        public synchronized void close() {
            if (open) {
                open = false;
                release(caller);
            }
        }
    }

    /** A permit for this request's body, or 503 naming the limit that is full. */
    Permit acquire(Context ctx) {
        String caller = AccessGuard.caller(ctx).map(c -> "key " + c.keyId()).orElseGet(() -> "address " + ctx.ip());
        if (!total.tryAcquire()) {
            throw ApiProblem.busy(limits.maxUploads() + " uploads are already being read, the most --max-uploads allows; retry later");
        }
        if (perCaller.merge(caller, 1, Integer::sum) > limits.maxUploadsPerKey()) {
            release(caller);
            throw ApiProblem.busy("this key already has " + limits.maxUploadsPerKey()
                    + " uploads being read, the most --max-uploads-per-key allows; retry later");
        }
        return new Permit(caller);
    }

    private void release(String caller) {
        perCaller.computeIfPresent(caller, (c, count) -> count <= 1 ? null : count - 1);
        total.release();
    }
}
