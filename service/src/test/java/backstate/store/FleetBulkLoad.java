package backstate.store;

import backstate.jobs.NewEstimate;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.PreparedStatement;
import java.sql.SQLException;
import java.sql.Statement;
import java.time.Instant;
import java.util.List;

/**
 * Bulk writer for benchmarks: stores a trace, its succeeded job and its estimate with the same
 * rows the service writes, and the fleet views' derived rows through the service's own
 * statements ({@link SqlFleet#recordEstimate}), on one raw connection in large transactions.
 * Synchronous writes are off (a benchmark fill need not survive a power cut); everything else
 * is the service's schema, indexes and SQL.
 */
public final class FleetBulkLoad implements AutoCloseable {
    private static final String INSERT_TRACE = "INSERT INTO traces (id, unit_id, family, version, received_at, samples,"
            + " window_start, window_end, payload) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)";
    private static final String INSERT_JOB = "INSERT INTO jobs (id, kind, state, trace_id, attempt, created_at,"
            + " started_at, finished_at, progress_done, progress_total) VALUES (?, 'estimate', 'succeeded', ?, 1, ?, ?, ?, 0, 0)";
    private static final String INSERT_ESTIMATE = "INSERT INTO estimates (id, job_id, trace_id, unit_id, family, version,"
            + " created_at, received_at, window_start, window_end, chi2_per_dof, flags, summary_json)"
            + " VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)";
    /** Each trace records 6 h (361 samples at 60 s) ending when it is received. */
    private static final double WINDOW_SECONDS = 21600.0;
    private static final byte[] PAYLOAD = new byte[16];

    private final Connection c;
    private final Statements statements;
    private final PreparedStatement trace;
    private final PreparedStatement job;
    private final PreparedStatement estimate;
    private long insertNanos;
    private long deriveNanos;
    private long rows;

    /** Opens a file whose schema is migrated already (open and close a SqliteDatabase on it first). */
    public FleetBulkLoad(Path file) throws SQLException {
        this.c = DriverManager.getConnection("jdbc:sqlite:" + file.toAbsolutePath());
        try (Statement s = c.createStatement()) {
            s.execute("PRAGMA journal_mode = WAL");
            s.execute("PRAGMA synchronous = OFF");
            s.execute("PRAGMA foreign_keys = ON");
            s.execute("PRAGMA cache_size = -262144"); // 256 MiB page cache for the fill
        }
        c.setAutoCommit(false);
        this.statements = new Statements(c);
        this.trace = c.prepareStatement(INSERT_TRACE);
        this.job = c.prepareStatement(INSERT_JOB);
        this.estimate = c.prepareStatement(INSERT_ESTIMATE);
    }

    /** One estimate as a job would write it, with its derived rows. */
    public void add(String unitId, String family, int version, Instant createdAt, Double chi2PerDof, List<String> flags,
                    String summaryJson) throws SQLException {
        long t0 = System.nanoTime();
        String traceId = Sql.newId();
        String jobId = Sql.newId();
        long at = Sql.millis(createdAt);
        long receivedAt = at - 1000;
        double windowEnd = receivedAt / 1000.0;
        double windowStart = windowEnd - WINDOW_SECONDS;
        Sql.bind(trace, traceId, unitId, family, version, receivedAt, 361, windowStart, windowEnd, PAYLOAD).executeUpdate();
        Sql.bind(job, jobId, traceId, receivedAt, at - 500, at).executeUpdate();
        String estimateId = Sql.newId();
        Sql.bind(estimate, estimateId, jobId, traceId, unitId, family, version, at, receivedAt, windowStart, windowEnd,
                chi2PerDof, Sql.joinFlags(flags), summaryJson).executeUpdate();
        NewEstimate typed = StoreFixture.estimate(traceId, unitId, family, version, windowStart, windowEnd, chi2PerDof,
                flags, summaryJson);
        long t1 = System.nanoTime();
        SqlFleet.recordEstimate(statements, estimateId, typed);
        deriveNanos += System.nanoTime() - t1;
        insertNanos += t1 - t0;
        rows++;
    }

    public void commit() throws SQLException {
        c.commit();
    }

    /** Mean time per estimate for the trace, job and estimate rows, in microseconds. */
    public double insertMicrosPerEstimate() {
        return insertNanos / 1e3 / Math.max(1, rows);
    }

    /** Mean time per estimate for the fleet views' derived rows, in microseconds. */
    public double deriveMicrosPerEstimate() {
        return deriveNanos / 1e3 / Math.max(1, rows);
    }

    @Override
    public void close() throws SQLException {
        if (!c.getAutoCommit()) {
            c.commit();
        }
        trace.close();
        job.close();
        estimate.close();
        statements.close();
        c.close();
    }
}
