package backstate.config;

import java.time.Duration;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.Optional;

/**
 * Service settings from command-line flags ({@code --port 8080}) over environment variables
 * ({@code BACKSTATE_PORT}) over defaults, validated once at start.
 */
public record Settings(String host, int port, DatabaseTarget database, int workers, long maxBodyBytes, int maxQueued,
                       int maxSamples, boolean auth, Optional<Secret> adminKey, int seriesThreads, int seriesQueue,
                       Duration jobLease, int databasePool, UploadLimits uploads, int readConcurrency) {
    /** Default body limit: 256 MiB holds a 10⁶-sample, 5-channel CSV with room to spare. */
    public static final long DEFAULT_MAX_BODY = 256L * 1024 * 1024;
    /**
     * Series re-solves at once: a 10⁶-sample series takes a core for ~0.2 s, so two keep plots
     * moving without taking the cores the workers solve on.
     */
    public static final int DEFAULT_SERIES_THREADS = 2;
    /** Series requests waiting for a thread; past them a request is answered 503 with Retry-After. */
    public static final int DEFAULT_SERIES_QUEUE = 8;
    /** Seconds a claimed job stays reserved without a renewal (its holder renews every third). */
    public static final int DEFAULT_JOB_LEASE_SECONDS = 15;
    /**
     * API reads answered at once (the rest wait their turn): the cores, at least two, so
     * dashboards alone can fill the machine but not crowd out trace posts and their solves.
     */
    public static final int DEFAULT_READ_CONCURRENCY = Math.max(2, Runtime.getRuntime().availableProcessors());
    /** PostgreSQL connections per replica. */
    public static final int DEFAULT_DATABASE_POOL = 8;

    /** The same settings with API keys off (the demo's loader posts without keys). */
    public Settings withAuthOff() {
        return new Settings(host, port, database, workers, maxBodyBytes, maxQueued, maxSamples, false, adminKey, seriesThreads,
                seriesQueue, jobLease, databasePool, uploads, readConcurrency);
    }

    /** Reads flags and environment; a bad value throws naming the setting. */
    public static Settings from(String[] flags, Map<String, String> env) {
        Map<String, String> values = new LinkedHashMap<>();
        values.put("host", env.getOrDefault("BACKSTATE_HOST", "0.0.0.0"));
        values.put("port", env.getOrDefault("BACKSTATE_PORT", "8080"));
        values.put("database", env.getOrDefault("BACKSTATE_DATABASE", "backstate.db"));
        values.put("workers", env.getOrDefault("BACKSTATE_WORKERS", Integer.toString(Runtime.getRuntime().availableProcessors())));
        values.put("max-body-bytes", env.getOrDefault("BACKSTATE_MAX_BODY_BYTES", Long.toString(DEFAULT_MAX_BODY)));
        values.put("max-queued", env.getOrDefault("BACKSTATE_MAX_QUEUED", "10000"));
        values.put("max-samples", env.getOrDefault("BACKSTATE_MAX_SAMPLES", "2000000"));
        values.put("auth", env.getOrDefault("BACKSTATE_AUTH", "on"));
        values.put("series-threads", env.getOrDefault("BACKSTATE_SERIES_THREADS", Integer.toString(DEFAULT_SERIES_THREADS)));
        values.put("series-queue", env.getOrDefault("BACKSTATE_SERIES_QUEUE", Integer.toString(DEFAULT_SERIES_QUEUE)));
        values.put("job-lease", env.getOrDefault("BACKSTATE_JOB_LEASE", Integer.toString(DEFAULT_JOB_LEASE_SECONDS)));
        values.put("database-pool", env.getOrDefault("BACKSTATE_DATABASE_POOL", Integer.toString(DEFAULT_DATABASE_POOL)));
        values.put("max-uploads", env.getOrDefault("BACKSTATE_MAX_UPLOADS", Integer.toString(UploadLimits.DEFAULT_MAX_UPLOADS)));
        values.put("max-uploads-per-key", env.getOrDefault("BACKSTATE_MAX_UPLOADS_PER_KEY",
                Integer.toString(UploadLimits.DEFAULT_MAX_UPLOADS_PER_KEY)));
        values.put("min-body-rate", env.getOrDefault("BACKSTATE_MIN_BODY_RATE", Integer.toString(UploadLimits.DEFAULT_MIN_BODY_RATE)));
        values.put("max-body-seconds", env.getOrDefault("BACKSTATE_MAX_BODY_SECONDS",
                Integer.toString(UploadLimits.DEFAULT_MAX_BODY_SECONDS)));
        values.put("read-concurrency", env.getOrDefault("BACKSTATE_READ_CONCURRENCY",
                Integer.toString(DEFAULT_READ_CONCURRENCY)));
        for (int i = 0; i < flags.length; i++) {
            String flag = flags[i];
            if (!flag.startsWith("--") || !values.containsKey(flag.substring(2))) {
                throw new IllegalArgumentException("got flag " + flag + ", expected one of --" + String.join(" VALUE, --", values.keySet()) + " VALUE");
            }
            if (i + 1 == flags.length) {
                throw new IllegalArgumentException("got flag " + flag + " without a value, expected " + flag + " VALUE");
            }
            values.put(flag.substring(2), flags[++i]);
        }
        return new Settings(values.get("host"), range("port", values, 0, 65535),
                DatabaseTarget.parse(values.get("database"), env),
                range("workers", values, 1, 256), longRange("max-body-bytes", values, 1024, Long.MAX_VALUE),
                range("max-queued", values, 1, 10_000_000), range("max-samples", values, 2, 100_000_000),
                onOff("auth", values), adminKey(env), range("series-threads", values, 1, 64),
                range("series-queue", values, 0, 10_000), Duration.ofSeconds(range("job-lease", values, 3, 3600)),
                range("database-pool", values, 2, 500), uploads(values),
                range("read-concurrency", values, 1, UploadLimits.HTTP_THREADS / 4));
    }

    /** Upload caps stay below the HTTP threads so that reads and health checks always find one. */
    private static UploadLimits uploads(Map<String, String> values) {
        return new UploadLimits(range("max-uploads", values, 1, UploadLimits.HTTP_THREADS / 2),
                range("max-uploads-per-key", values, 1, UploadLimits.HTTP_THREADS / 2),
                range("min-body-rate", values, 0, 1 << 30), Duration.ofSeconds(range("max-body-seconds", values, 1, 86_400)));
    }

    /** One line per setting, for the start-up log. */
    public String describe() {
        return "host=" + host + " port=" + port + " database=" + database.describe() + " workers=" + workers
                + " max-body-bytes=" + maxBodyBytes + " max-queued=" + maxQueued + " max-samples=" + maxSamples
                + " auth=" + (auth ? "on" : "off") + " admin-key=" + (adminKey.isPresent() ? "set" : "unset")
                + " series-threads=" + seriesThreads + " series-queue=" + seriesQueue
                + " job-lease=" + jobLease.toSeconds() + "s database-pool=" + databasePool
                + " max-uploads=" + uploads.maxUploads() + " max-uploads-per-key=" + uploads.maxUploadsPerKey()
                + " min-body-rate=" + uploads.minBodyRate() + " max-body-seconds=" + uploads.maxBodyTime().toSeconds()
                + " read-concurrency=" + readConcurrency;
    }

    /** Access control on or off; the admin key comes from the environment only, never a flag (flags show in ps). */
    private static boolean onOff(String name, Map<String, String> values) {
        String text = values.get(name).trim();
        if (text.equals("on") || text.equals("off")) {
            return text.equals("on");
        }
        throw new IllegalArgumentException("setting " + name + ": got " + text + ", expected on or off");
    }

    private static Optional<Secret> adminKey(Map<String, String> env) {
        String key = env.get("BACKSTATE_ADMIN_KEY");
        return key == null || key.isBlank() ? Optional.empty() : Optional.of(new Secret(key.trim()));
    }

    private static int range(String name, Map<String, String> values, int min, int max) {
        long v = longRange(name, values, min, max);
        return (int) v;
    }

    private static long longRange(String name, Map<String, String> values, long min, long max) {
        String text = values.get(name);
        try {
            long v = Long.parseLong(text.trim());
            if (v >= min && v <= max) {
                return v;
            }
        } catch (NumberFormatException ignored) {
            // answered below
        }
        throw new IllegalArgumentException("setting " + name + ": got " + text + ", expected a whole number in [" + min + ", " + max + "]");
    }
}
