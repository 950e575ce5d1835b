package backstate.config;

import java.time.Duration;

/**
 * How many request bodies may stream in at once and how slowly. Every body-reading route counts
 * against {@code maxUploads} in total and {@code maxUploadsPerKey} per API key (per client address
 * with access control off); a body must keep up {@code minBodyRate} bytes a second once it has
 * been read for {@link #RATE_GRACE}, and end within {@code maxBodyTime}.
 *
 * @param maxUploads       bodies read at once in total, kept well under the HTTP thread pool so
 *                         reads, health and readiness always find a thread
 * @param maxUploadsPerKey bodies read at once for one key
 * @param minBodyRate      bytes a second a body must average after the grace period
 * @param maxBodyTime      longest a body may take to arrive
 */
public record UploadLimits(int maxUploads, int maxUploadsPerKey, int minBodyRate, Duration maxBodyTime) {
    /** A body's first seconds are not held to the rate (connection set-up, a gateway's first chunk). */
    public static final Duration RATE_GRACE = Duration.ofSeconds(5);
    /** Threads Jetty serves HTTP with (Javalin's default pool), against which the upload cap is sized. */
    public static final int HTTP_THREADS = 250;
    public static final int DEFAULT_MAX_UPLOADS = 64;
    /**
     * Half the total: one gateway (or, with keys off, one address — a NAT or proxy in front of a
     * whole site) may post 32 traces at once, as the load driver's 32 clients do, and still
     * leave half the uploads to everyone else.
     */
    public static final int DEFAULT_MAX_UPLOADS_PER_KEY = 32;
    /** 1 KiB/s: a 35 KB demo trace in 35 s on the worst link; a byte every few seconds is far below. */
    public static final int DEFAULT_MIN_BODY_RATE = 1024;
    public static final int DEFAULT_MAX_BODY_SECONDS = 300;
    public static final UploadLimits DEFAULTS = new UploadLimits(DEFAULT_MAX_UPLOADS, DEFAULT_MAX_UPLOADS_PER_KEY,
            DEFAULT_MIN_BODY_RATE, Duration.ofSeconds(DEFAULT_MAX_BODY_SECONDS));

    public UploadLimits {
        if (maxUploadsPerKey > maxUploads) {
            throw new IllegalArgumentException("setting max-uploads-per-key: got " + maxUploadsPerKey
                    + ", expected at most max-uploads (" + maxUploads + ")");
        }
    }
}
