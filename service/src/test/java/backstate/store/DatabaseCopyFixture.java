package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.jobs.ClaimedJob;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HexFormat;
import java.util.List;
import java.util.Map;
import java.util.Random;

/**
 * A SQLite store filled with one of everything {@code migrate} copies: two model versions, traces
 * (one with a 1 MiB payload), finished jobs with estimates and their fleet rows, a job failed
 * after a retry (two errors and failure details), a queued job, a job left running, a regression
 * run with a cancel request, idempotency keys, and API keys of three roles, one revoked. Unit IDs
 * mix case and a non-ASCII letter, so any difference in how the two engines sort text shows.
 */
public final class DatabaseCopyFixture {

    /** Sorted differently by byte order ("B" &lt; "a" &lt; "ü") and by most language collations. */
    public static final List<String> UNITS = List.of("unit-a", "Unit-B", "ünit-c");
    public static final String FAILED_UNIT = "unit-failed";
    public static final String QUEUED_UNIT = "unit-queued";
    public static final String RUNNING_UNIT = "unit-running";
    public static final int LARGE_PAYLOAD = 1 << 20;

    /** What the fill stored, for the reads the tests compare. */
    public record Stored(List<String> jobIds, List<String> traceIds, String regressionId) {
    }

    private DatabaseCopyFixture() {
    }

    /** The fixture's idempotency key of a unit's first trace. */
    public static IdempotencyKey keyOf(String unit) {
        return StoreFixture.key("key-" + unit, "post of " + unit);
    }

    public static NewTrace traceOf(String unit) {
        return StoreFixture.trace(unit);
    }

    /** Fills a store that holds the fixture's "pump" version 1 (see {@link StoreFixture}). */
    public static Stored fill(Database store) throws Exception {
        Instant t = StoreFixture.T0;
        store.models().publishVersion(StoreFixture.pumpVersion(), t);
        List<String> jobs = new ArrayList<>();
        List<String> traces = new ArrayList<>();
        for (int i = 0; i < UNITS.size(); i++) {
            String unit = UNITS.get(i);
            for (int n = 0; n < 2; n++) {
                Instant at = t.plusSeconds(10L * i + n);
                Submission s = store.traces().submitTrace(traceOf(unit), n == 0 ? keyOf(unit) : null, 100, at);
                ClaimedJob job = claimOne(store, at);
                double start = at.getEpochSecond() + 0.1; // 0.1 has no exact double: its bits must survive
                assertTrue(store.queue().completeIfRunning(job.id(), job.attempt(), StoreFixture.estimate(s.traceId(),
                        unit, StoreFixture.FAMILY, 1, start, start + 2, n == 0 ? 0.1 * (i + 1) : null,
                        n == 0 ? List.of("few_samples") : List.of(), n == 0 ? FleetStoreTest.DOCUMENT : "not json"),
                        "{\"ok\": true}", at));
                jobs.add(job.id());
                traces.add(s.traceId());
            }
        }
        byte[] large = new byte[LARGE_PAYLOAD];
        new Random(12).nextBytes(large);
        Submission failed = store.traces().submitTrace(new NewTrace(FAILED_UNIT, StoreFixture.FAMILY, 1, 3, 0.0, 2.0,
                large), keyOf(FAILED_UNIT), 100, t);
        ClaimedJob first = claimOne(store, t);
        assertTrue(store.queue().retryIfRunning(first.id(), first.attempt(), "solver timed out, \"retrying\"", t));
        ClaimedJob second = claimOne(store, t);
        assertTrue(store.queue().failIfRunning(second.id(), second.attempt(), "diverged: ünits [1, 2]",
                "{\"kind\":  \"diverged\", \"iterations\": 50}", t));
        Submission running = store.traces().submitTrace(traceOf(RUNNING_UNIT), null, 100, t.plusSeconds(1));
        assertEquals(running.jobId(), claimOne(store, t.plusSeconds(1)).id());
        Submission queued = store.traces().submitTrace(traceOf(QUEUED_UNIT), keyOf(QUEUED_UNIT), 100, t.plusSeconds(1));
        String regression = store.regressions().createRegression(new NewRegression(StoreFixture.FAMILY, 1, 2,
                "{\"latest\": 1}"), 100, t.plusSeconds(2));
        assertTrue(store.regressions().requestRegressionCancel(regression, t.plusSeconds(3)));
        insertKeys(store, t);
        jobs.addAll(List.of(failed.jobId(), queued.jobId(), running.jobId(), regression));
        traces.addAll(List.of(failed.traceId(), queued.traceId(), running.traceId()));
        return new Stored(jobs, traces, regression);
    }

    /** An API key's every column as text, bytes in hex: ApiKeyRow's arrays compare by identity. */
    public static String describe(ApiKeyRow k) {
        return String.join("|", k.id(), k.role(), String.valueOf(k.unitPattern()), k.label(),
                HexFormat.of().formatHex(k.salt()), HexFormat.of().formatHex(k.hash()), String.valueOf(k.createdAt()),
                String.valueOf(k.createdBy()), String.valueOf(k.revokedAt()));
    }

    /** A trace's every column as text, the payload in hex. */
    public static String describe(TraceRow r) {
        return String.join("|", r.id(), r.unitId(), r.family(), String.valueOf(r.version()),
                String.valueOf(r.receivedAt()), String.valueOf(r.samples()), Double.toString(r.windowStart()),
                Double.toString(r.windowEnd()), HexFormat.of().formatHex(r.payload()));
    }

    /** The fleet summary of the fixture's family, version 1, both channels. */
    public static FleetSummaryQuery summaryQuery() {
        return new FleetSummaryQuery(StoreFixture.FAMILY, Map.of(1, List.of("pos", "vel")), TimeFilter.NONE, null,
                StoreFixture.T0.plusSeconds(15), 10);
    }

    private static ClaimedJob claimOne(Database store, Instant at) {
        List<ClaimedJob> claimed = store.queue().claimNext(1, at);
        assertEquals(1, claimed.size());
        return claimed.get(0);
    }

    private static void insertKeys(Database store, Instant t) {
        Random random = new Random(7);
        String[][] keys = {{"adminkey00000001", "admin", null}, {"gatewaykey000002", "gateway", "unit-*"},
                {"readerkey0000003", "reader", null}};
        for (String[] k : keys) {
            byte[] salt = new byte[16];
            byte[] hash = new byte[32];
            random.nextBytes(salt);
            random.nextBytes(hash);
            assertTrue(store.keys().insertApiKey(new NewApiKey(k[0], k[1], k[2], "label of " + k[1], salt, hash,
                    k[1].equals("admin") ? null : keys[0][0]), t));
        }
        assertEquals(KeyRevocation.REVOKED, store.keys().revokeApiKey("readerkey0000003", t.plusSeconds(5)));
    }
}
