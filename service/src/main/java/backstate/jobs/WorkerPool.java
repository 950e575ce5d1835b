package backstate.jobs;

import io.micrometer.core.instrument.MeterRegistry;
import java.time.Clock;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.RejectedExecutionException;
import java.util.concurrent.Semaphore;
import java.util.concurrent.ThreadFactory;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicBoolean;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.concurrent.locks.LockSupport;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Runs queued jobs: a fixed number of solving slots (the {@code workers} setting), and
 * {@link #JOBS_IN_FLIGHT_PER_SLOT} job threads per slot.
 *
 * <p>{@code solvingSlots} handlers run at once, and up to {@link #JOBS_IN_FLIGHT_PER_SLOT} times
 * as many jobs are in flight, each on a job thread: claimed and waiting for a solving slot, in a
 * handler, or done and waiting for its outcome to be written. Claims and outcomes are committed in
 * batches ({@code store.SqliteWriter}), and under a flood of trace posts each such write waits tens
 * of milliseconds behind the batch under way; so a claim brings several jobs, the next handler runs
 * while earlier outcomes wait, and the waiting writes share a commit, instead of a slot idling
 * while its own write waits. "running" therefore means claimed by this process: a job may wait
 * there for a solving slot, behind at most {@code JOBS_IN_FLIGHT_PER_SLOT - 1} others per slot.
 *
 * <p>One dispatcher thread claims as many jobs as there are free job threads, in one
 * {@link JobQueue#claimNext} call, and hands them to the job threads. It sleeps for {@code idlePoll}
 * when the queue is empty or every job thread is busy, and wakes early when a job finishes or
 * {@link #wake()} is called after an enqueue. Every {@code stuckAfter / 4} it also rescues jobs
 * running longer than {@code stuckAfter} (a hung handler): their late results are refused by the
 * attempt check, so rescue never lets a job complete twice.
 *
 * <p>Every claim takes a lease ({@link Policy#lease()}); a heartbeat thread renews the leases of
 * the jobs this pool holds every third of it, and returns to the queue any running job whose
 * lease ran out: its holder was killed, froze or lost the database. With replicas sharing one
 * queue ({@link Policy#replicas}) each pool holds only the jobs its solving slots can start, so an
 * idle replica is never starved by a busy one's backlog.
 *
 * <p>What a job's outcome does to it is {@link JobRunner}'s concern.
 */
public final class WorkerPool implements AutoCloseable {

    /** Fits inside the 30 s a container is usually given to stop, leaving time for the HTTP side. */
    public static final Duration DEFAULT_SHUTDOWN_GRACE = Duration.ofSeconds(20);
    /** Far longer than any estimation should run: a job running this long is taken to be hung. */
    public static final Duration DEFAULT_STUCK_AFTER = Duration.ofHours(1);
    /**
     * Jobs in flight (job threads) per solving slot: claimed and waiting for the slot, in the
     * handler, or waiting for their outcome's write. Under a flood of posts one commit batch takes
     * ~30 ms on 2 cores, and a small job solves in under 1 ms, so a slot needs a dozen or more
     * outcomes waiting for each batch to stay busy: with 4 per slot the pool solved ~90 jobs/s
     * while posts arrived at ~450/s, with 16 it keeps pace (measured with bench/load/ingest.sh).
     */
    static final int JOBS_IN_FLIGHT_PER_SLOT = 16;
    /** Renewals per lease: two may fail (a slow commit, a short outage) before the lease runs out. */
    private static final int RENEWALS_PER_LEASE = 3;

    /**
     * How a pool claims: jobs in flight per solving slot, and how long a claim holds a job without
     * a renewal.
     */
    public record Policy(int jobsInFlightPerSlot, Duration lease) {
        /** Long enough to ride out a stop-the-world pause or a slow commit; short enough to notice a kill. */
        public static final Duration DEFAULT_LEASE = Duration.ofSeconds(15);

        public Policy {
            if (jobsInFlightPerSlot < 1) {
                throw new IllegalArgumentException("got jobsInFlightPerSlot " + jobsInFlightPerSlot + ", expected >= 1");
            }
            requirePositive("lease", lease);
        }

        /** The only process on its store: claims in batches, as the SQLite writer rewards. */
        public static Policy singleProcess(Duration lease) {
            return new Policy(JOBS_IN_FLIGHT_PER_SLOT, lease);
        }

        /** One of several replicas on a shared store: claims only what its slots can start. */
        public static Policy replicas(Duration lease) {
            return new Policy(1, lease);
        }
    }
    /** A hung job is rescued at most a quarter of stuckAfter late. */
    private static final int RESCUE_CHECKS_PER_STUCK_WINDOW = 4;

    private static final Logger LOG = LoggerFactory.getLogger(WorkerPool.class);

    private final JobQueue queue;
    private final JobRunner runner;
    private final Clock clock;
    private final Duration idlePoll;
    private final Duration shutdownGrace;
    private final Duration stuckAfter;
    private final Duration rescueInterval;
    private final JobMetrics metrics;
    /** Job threads: a job holds one from its claim until its outcome is written. */
    private final int jobThreadCount;
    private final Semaphore freeJobThreads;
    private final ExecutorService jobThreads;
    private final Thread dispatcher;
    private final Duration lease;
    private final Thread heartbeat;
    /** The jobs this pool holds (claimed, outcome not yet written), by ID: their leases are renewed. */
    private final Map<String, ClaimedJob> held = new ConcurrentHashMap<>();
    /** The held jobs whose outcome this pool is writing or has written: not renewable, and not lost. */
    private final Set<String> finishing = ConcurrentHashMap.newKeySet();
    private final AtomicBoolean started = new AtomicBoolean();
    private final AtomicBoolean closed = new AtomicBoolean();
    private volatile boolean stopping;
    private volatile boolean abandoned;

    public WorkerPool(JobQueue q, JobHandler h, int solvingSlots, Clock clock, Duration idlePoll, MeterRegistry registry) {
        this(q, h, solvingSlots, clock, idlePoll, registry, DEFAULT_SHUTDOWN_GRACE, DEFAULT_STUCK_AFTER);
    }

    public WorkerPool(JobQueue q, JobHandler h, int solvingSlots, Clock clock, Duration idlePoll, MeterRegistry registry,
                      Duration shutdownGrace, Duration stuckAfter) {
        this(q, h, solvingSlots, clock, idlePoll, registry, shutdownGrace, stuckAfter,
                Policy.singleProcess(Policy.DEFAULT_LEASE));
    }

    public WorkerPool(JobQueue q, JobHandler h, int solvingSlots, Clock clock, Duration idlePoll, MeterRegistry registry,
                      Duration shutdownGrace, Duration stuckAfter, Policy policy) {
        requireNonNull("queue", q);
        requireNonNull("handler", h);
        requireNonNull("clock", clock);
        requireNonNull("registry", registry);
        if (solvingSlots < 1) {
            throw new IllegalArgumentException("got solvingSlots " + solvingSlots + ", expected >= 1");
        }
        requirePositive("idlePoll", idlePoll);
        requirePositive("shutdownGrace", shutdownGrace);
        requirePositive("stuckAfter", stuckAfter);
        requireNonNull("policy", policy);
        this.queue = q;
        this.clock = clock;
        this.idlePoll = idlePoll;
        this.shutdownGrace = shutdownGrace;
        this.stuckAfter = stuckAfter;
        this.rescueInterval = stuckAfter.dividedBy(RESCUE_CHECKS_PER_STUCK_WINDOW);
        this.jobThreadCount = solvingSlots * policy.jobsInFlightPerSlot();
        this.lease = policy.lease();
        this.freeJobThreads = new Semaphore(jobThreadCount);
        this.jobThreads = Executors.newFixedThreadPool(jobThreadCount, namedDaemons("backstate-worker-"));
        this.dispatcher = namedDaemons("backstate-dispatcher-").newThread(this::dispatchUntilStopped);
        this.heartbeat = namedDaemons("backstate-lease-").newThread(this::renewUntilStopped);
        this.metrics = new JobMetrics(registry, q);
        // At most `solvingSlots` handlers run at once, so CPU and memory stay as configured.
        this.runner = new JobRunner(q, h, clock, metrics, () -> abandoned, new Semaphore(solvingSlots),
                job -> finishing.add(job.id()));
    }

    public void start() {
        if (!started.compareAndSet(false, true)) {
            throw new IllegalStateException("got a second start(), expected one");
        }
        dispatcher.start();
        heartbeat.start();
    }

    /** Lets an idle pool claim at once, instead of at its next poll; call it after an enqueue. */
    public void wake() {
        LockSupport.unpark(dispatcher);
    }

    /**
     * Stops claiming, waits up to the shutdown grace for running jobs to finish, then leaves the
     * rest running in the database for the next start's rescue (their threads are interrupted,
     * and a failure they then report is not recorded).
     */
    @Override
    public void close() {
        if (!closed.compareAndSet(false, true)) {
            return;
        }
        stopping = true;
        wake();
        awaitDispatcher();
        jobThreads.shutdown();
        if (!awaitJobThreads()) {
            abandoned = true;
            LOG.warn("jobs still running after {}; leaving them for rescue when their lease runs out", shutdownGrace);
            jobThreads.shutdownNow();
        }
        heartbeat.interrupt(); // after the grace: jobs finishing in it keep their leases
        metrics.close();
    }

    private void dispatchUntilStopped() {
        Instant nextRescue = clock.instant().plus(rescueInterval);
        while (!stopping) {
            if (!clock.instant().isBefore(nextRescue)) {
                rescueStuckJobs();
                nextRescue = clock.instant().plus(rescueInterval);
            }
            if (claimAndDispatch() == 0) {
                LockSupport.parkNanos(this, idlePoll.toNanos());
            }
        }
    }

    /**
     * Claims up to one job per free job thread, once at least half of them are free and the queue
     * holds a job; returns how many were claimed. Each claim is a write of its own, so claiming in
     * halves rather than one job per finished job keeps claims to a few per batch (the half still
     * in flight keeps every solving slot busy meanwhile), and a read of the queue's length first
     * spares the writer the claims that would find nothing: half of all claims at 300 posts/s,
     * when every post and every finished job wakes the dispatcher.
     */
    private int claimAndDispatch() {
        int free = freeJobThreads.availablePermits(); // only this thread takes permits, so they stay free
        if (free < Math.max(1, jobThreadCount / 2) || queueLooksEmpty()) {
            return 0;
        }
        List<ClaimedJob> claimed = claimOrNothing(free);
        for (ClaimedJob job : claimed) {
            freeJobThreads.acquireUninterruptibly();
            dispatch(job);
        }
        return claimed.size();
    }

    /** The queue's length as last committed; a job queued after this read wakes the dispatcher again. */
    private boolean queueLooksEmpty() {
        try {
            return queue.queuedCount() == 0;
        } catch (RuntimeException e) {
            return false; // let the claim try, and report its own failure
        }
    }

    private List<ClaimedJob> claimOrNothing(int limit) {
        try {
            Instant now = clock.instant();
            return queue.claimNext(limit, now, now.plus(lease));
        } catch (RuntimeException e) {
            LOG.warn("claiming jobs failed; retrying after {}", idlePoll, e);
            return List.of();
        }
    }

    private void dispatch(ClaimedJob job) {
        held.put(job.id(), job);
        try {
            jobThreads.execute(() -> runAndFreeJobThread(job));
        } catch (RejectedExecutionException e) {
            held.remove(job.id());
            freeJobThreads.release();
            LOG.warn("job {} claimed while shutting down; left running for rescue", job.id());
        }
    }

    private void rescueStuckJobs() {
        try {
            int rescued = queue.rescueStuck(clock.instant().minus(stuckAfter));
            if (rescued > 0) {
                LOG.warn("rescued {} jobs running for more than {}", rescued, stuckAfter);
            }
        } catch (RuntimeException e) {
            LOG.warn("rescuing stuck jobs failed; trying again in {}", rescueInterval, e);
        }
    }

    private void runAndFreeJobThread(ClaimedJob job) {
        try {
            runner.run(job);
        } finally {
            held.remove(job.id());
            finishing.remove(job.id());
            freeJobThreads.release();
            wake();
        }
    }

    /**
     * Every third of a lease: renews the leases of the jobs held, then rescues jobs whose lease
     * ran out. Runs until close, and keeps renewing while running jobs finish during the grace.
     */
    private void renewUntilStopped() {
        long pauseNanos = lease.dividedBy(RENEWALS_PER_LEASE).toNanos();
        while (!Thread.currentThread().isInterrupted()) {
            LockSupport.parkNanos(this, pauseNanos);
            if (Thread.currentThread().isInterrupted()) {
                return;
            }
            renewAndRescue();
        }
    }

    private void renewAndRescue() {
        Instant now = clock.instant();
        List<ClaimedJob> mine = List.copyOf(held.values());
        try {
            int renewed = queue.renewLeases(mine, now.plus(lease));
            // A job whose outcome this pool is writing, or wrote after the copy above, is no longer
            // renewable, and not lost: only the shortfall beyond those is jobs taken from this pool.
            long finishedMeanwhile = mine.stream()
                    .filter(job -> !held.containsKey(job.id()) || finishing.contains(job.id())).count();
            long takenBack = mine.size() - renewed - finishedMeanwhile;
            if (takenBack > 0) {
                LOG.warn("{} of {} held jobs were taken back (lease ran out or job finished elsewhere)",
                        takenBack, mine.size());
            }
            int rescued = queue.rescueExpiredLeases(now);
            if (rescued > 0) {
                LOG.warn("returned {} jobs whose lease ran out to the queue", rescued);
                wake();
            }
        } catch (RuntimeException e) {
            LOG.warn("renewing job leases failed; trying again in {}", lease.dividedBy(RENEWALS_PER_LEASE), e);
        }
    }

    private void awaitDispatcher() {
        try {
            dispatcher.join(shutdownGrace.toMillis());
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }

    private boolean awaitJobThreads() {
        try {
            return jobThreads.awaitTermination(shutdownGrace.toMillis(), TimeUnit.MILLISECONDS);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            return false;
        }
    }

    private static ThreadFactory namedDaemons(String prefix) {
        AtomicInteger count = new AtomicInteger();
        return runnable -> {
            Thread thread = new Thread(runnable, prefix + count.incrementAndGet());
            thread.setDaemon(true);
            return thread;
        };
    }

    private static void requireNonNull(String name, Object value) {
        if (value == null) {
            throw new IllegalArgumentException("got null " + name + ", expected a value");
        }
    }

    private static void requirePositive(String name, Duration value) {
        if (value == null || value.isZero() || value.isNegative()) {
            throw new IllegalArgumentException("got " + name + " " + value + ", expected a positive duration");
        }
    }
}
