package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.jobs.ClaimedJob;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Random;
import org.junit.jupiter.api.Test;

/**
 * The all-time fleet summary, read from the running totals (SqlFleetTotals), equals the same
 * summary recomputed from scratch over the rows ({@link SqlFleet#fleetSummaryFromRows}, the pass
 * the service made before the totals), compared with equals: every count, every unit list and
 * every quantile to the last bit. Runs on both engines.
 */
class FleetTotalsTest extends StoreContractTestBase {

    private static final Map<Integer, List<String>> CHANNELS = Map.of(1, List.of("pos", "vel"));
    /** Claims tried before a queued job must have been had (see completeOn); a hang guard, not a timing. */
    private static final int CLAIM_RETRIES = 1000;
    private static final List<List<String>> FLAG_SETS = List.of(List.of(), List.of("few_samples"),
            List.of("model_mismatch", "few_samples"), List.of("model_mismatch"), List.of());

    @Test
    void the_all_time_summary_from_the_totals_equals_the_pass_over_the_rows() throws Exception {
        Random random = new Random(15);
        for (int i = 0; i < 120; i++) {
            complete(random, i, nasty(random));
        }
        // A trace still waiting for its estimate counts as a trace only.
        store.traces().submitTrace(new NewTrace("unit-99", "pump", 1, 3, 0.0, 2.0, new byte[] {1}), null, 1000,
                StoreFixture.T0);
        for (int listLimit : new int[] {1, 3, 50}) {
            assertSameAnswers(listLimit);
        }
    }

    /**
     * Values on and beside bin edges (e^(k/256), the binning's own, and their neighbouring doubles),
     * zeros and ties: a bin misplaced by one value would shift every rank above it.
     */
    @Test
    void values_on_bin_edges_zeros_and_ties_keep_every_rank() throws Exception {
        Random random = new Random(16);
        int i = 0;
        for (int k = -3; k <= 3; k++) {
            double edge = Math.exp(k / 256.0);
            for (double v : new double[] {edge, Math.nextDown(edge), Math.nextUp(edge), edge, 0.0}) {
                complete(random, i++, v);
            }
        }
        assertSameAnswers(50);
    }

    /** A closed form: χ²/dof 1, 2, 3, 4 give median 2.5, p95 = 3 + 0.85·1 = 3.85 and max 4 (Hyndman & Fan 1996, definition 7). */
    @Test
    void four_values_give_the_textbook_quantiles() throws Exception {
        Random random = new Random(17);
        for (int i = 0; i < 4; i++) {
            complete(random, i, 4.0 - i);
        }
        FleetSummary.Distribution chi2 = allTime(50).versions().get(0).chiSquarePerDof();
        assertEquals(4, chi2.count());
        assertEquals(2.5, chi2.median(), 0.0);
        assertEquals(3.85, chi2.p95(), 1e-15);
        assertEquals(4.0, chi2.max(), 0.0);
    }

    /** A recording estimated again (a retried or re-solved job) is one more estimate, as the rows count it. */
    @Test
    void an_estimate_written_again_for_the_same_recording_counts_as_the_rows_do() throws Exception {
        Random random = new Random(18);
        complete(random, 0, 1.5);
        complete(random, 0, 2.5);
        assertSameAnswers(50);
        assertEquals(List.of(2L, 1L), List.of(allTime(50).versions().get(0).estimates(),
                allTime(50).versions().get(0).units()));
    }

    /**
     * A database filled before the totals: the data is written, then everything V12 (SQLite) or V2
     * (PostgreSQL) added is dropped and its history row deleted, which leaves the previous version's
     * schema with the rows in it; reopening migrates again, and the back-fill's totals answer as the
     * rows do, before and after one more estimate.
     */
    @Test
    void the_migration_fills_the_totals_of_a_database_written_before_them() throws Exception {
        Random random = new Random(19);
        for (int i = 0; i < 60; i++) {
            complete(random, i, nasty(random));
        }
        FleetSummary expected = ((SqlFleet) store.fleet()).fleetSummaryFromRows(query(3));
        undoTotalsMigration();
        try (Database reopened = fx.open()) {
            store = reopened;
            assertEquals(1, fx.count("SELECT count(*) FROM flyway_schema_history WHERE version = ?", totalsVersion()));
            assertEquals(expected, allTime(3));
            complete(random, 60, 1.75);
            assertSameAnswers(3);
        } finally {
            store = fx.store;
        }
    }

    /**
     * Two writers completing estimates of one unit with one χ²/dof at once — two replicas on
     * PostgreSQL, two threads on SQLite's one writer — bump the same counter rows; the upserts'
     * row locks must lose no increment.
     */
    @Test
    void concurrent_writers_on_the_same_unit_and_bin_lose_no_increment() throws Exception {
        int each = 25;
        try (Database second = backend == Backend.POSTGRESQL ? fx.open() : null) {
            List<Database> writers = List.of(store, second == null ? store : second);
            java.util.concurrent.ExecutorService pool = java.util.concurrent.Executors.newFixedThreadPool(2);
            List<java.util.concurrent.Future<?>> done = new ArrayList<>();
            for (Database writer : writers) {
                done.add(pool.submit(() -> {
                    for (int i = 0; i < each; i++) {
                        completeOn(writer, "unit-hot", 1.25, List.of("model_mismatch"));
                    }
                    return null;
                }));
            }
            for (java.util.concurrent.Future<?> f : done) {
                f.get();
            }
            pool.shutdown();
        }
        FleetSummary.VersionActivity v = allTime(50).versions().get(0);
        assertEquals(List.of(2L * each, 1L, 2L * each, 2 * each, 1.25),
                List.of(v.estimates(), v.units(), v.traces(), v.chiSquarePerDof().count(), v.chiSquarePerDof().median()));
        assertEquals(new FleetSummary.FlaggedUnits(2L * each, 1, List.of("unit-hot")), v.flags().get("model_mismatch"));
        assertSameAnswers(50);
    }

    /**
     * docs/deployment.md's repair after a rolling upgrade in which an older build wrote estimates
     * without the running totals (PostgreSQL from schema version 2): the totals short of the rows
     * are rebuilt, in one transaction holding writers off, to the pass over the rows.
     */
    @Test
    void the_documented_rebuild_brings_totals_an_older_build_missed_back_to_the_rows() throws Exception {
        org.junit.jupiter.api.Assumptions.assumeTrue(backend == Backend.POSTGRESQL, "the rebuild function is PostgreSQL's");
        Random random = new Random(16);
        for (int i = 0; i < 40; i++) {
            complete(random, i, nasty(random));
        }
        try (java.sql.Connection c = fx.raw(); java.sql.Statement st = c.createStatement()) {
            // What an older build leaves: estimates written, their totals not.
            st.execute("DELETE FROM fleet_unit_estimates WHERE unit_id IN (SELECT unit_id FROM fleet_unit_estimates LIMIT 3)");
            st.execute("DELETE FROM fleet_chi2_bins WHERE ctid IN (SELECT ctid FROM fleet_chi2_bins LIMIT 5)");
        }
        assertNotEquals(((SqlFleet) store.fleet()).fleetSummaryFromRows(query(50)), allTime(50),
                "the damage shows before the repair");
        try (java.sql.Connection c = fx.raw(); java.sql.Statement st = c.createStatement()) {
            for (String sql : List.of("BEGIN", "LOCK TABLE traces, estimates IN SHARE MODE", "SELECT fleet_totals_rebuild()",
                    "COMMIT")) {
                st.execute(sql);
            }
        }
        assertSameAnswers(50);
    }

    /**
     * Submits a trace of the unit on {@code writer}, claims a queued job there and completes it. On
     * PostgreSQL a claim may come back empty though a job is queued: the other replica's claim,
     * whose snapshot holds a trace submitted after this claim's snapshot was taken, can hold the
     * one row this snapshot sees (SKIP LOCKED skips it). A worker then claims again at its next
     * poll; so does this, a bounded number of times.
     */
    private static void completeOn(Database writer, String unit, double chi2, List<String> flags) throws Exception {
        Instant at = StoreFixture.T0;
        String document = "{\"states\":[],\"residuals\":{\"channels\":[{\"output\":\"pos\",\"rms\":0.5}]}}";
        writer.traces().submitTrace(new NewTrace(unit, "pump", 1, 3, 0.0, 2.0, new byte[] {1}), null, 1000, at);
        List<ClaimedJob> claimed = writer.queue().claimNext(1, at);
        for (int again = 0; claimed.isEmpty() && again < CLAIM_RETRIES; again++) {
            Thread.sleep(1);
            claimed = writer.queue().claimNext(1, at);
        }
        assertEquals(1, claimed.size(), "a queued job within " + CLAIM_RETRIES + " claims");
        ClaimedJob job = claimed.get(0);
        assertTrue(writer.queue().completeIfRunning(job.id(), job.attempt(), StoreFixture.estimate(job.traceId(), unit,
                "pump", 1, 0.0, 2.0, chi2, flags, document), null, at));
    }

    private String totalsVersion() {
        return backend == Backend.SQLITE ? "12" : "2";
    }

    private void undoTotalsMigration() throws Exception {
        List<String> undo = new ArrayList<>(backend == Backend.SQLITE
                ? List.of("DROP TRIGGER fleet_unit_traces_count")
                : List.of("DROP TRIGGER fleet_unit_traces_count ON traces", "DROP FUNCTION fleet_unit_traces_count()",
                        "DROP FUNCTION fleet_totals_rebuild()"));
        for (String table : List.of("fleet_unit_estimates", "fleet_unit_traces", "fleet_unit_flags", "fleet_chi2_bins",
                "fleet_rms_bins")) {
            undo.add("DROP TABLE " + table);
        }
        undo.add("DROP INDEX estimates_by_model_chi2");
        undo.add("DROP INDEX estimate_channels_by_rms");
        undo.add("DELETE FROM flyway_schema_history WHERE version = '" + totalsVersion() + "'");
        try (java.sql.Connection c = fx.raw(); java.sql.Statement st = c.createStatement()) {
            for (String sql : undo) {
                st.execute(sql);
            }
        }
    }

    @Test
    void a_version_without_estimates_has_zeros_and_no_statistics() {
        FleetSummary.VersionActivity v = allTime(50).versions().get(0);
        assertEquals(List.of(0L, 0L, 0L, 0), List.of(v.units(), v.traces(), v.estimates(), v.chiSquarePerDof().count()));
        assertSameAnswers(50);
    }

    private FleetSummary allTime(int listLimit) {
        return store.fleet().fleetSummary(query(listLimit));
    }

    private void assertSameAnswers(int listLimit) {
        FleetSummary fromRows = ((SqlFleet) store.fleet()).fleetSummaryFromRows(query(listLimit));
        assertEquals(fromRows, allTime(listLimit), "list limit " + listLimit);
    }

    private static FleetSummaryQuery query(int listLimit) {
        return new FleetSummaryQuery("pump", CHANNELS, TimeFilter.NONE, null, StoreFixture.T0, listLimit);
    }

    /** χ²/dof: mostly log-normal about 1, some ties, zeros, a heavy tail and a few without one. */
    private static Double nasty(Random random) {
        double u = random.nextDouble();
        if (u < 0.05) {
            return null;
        }
        if (u < 0.1) {
            return 0.0;
        }
        if (u < 0.2) {
            return 1.0;
        }
        if (u < 0.25) {
            return 50 * Math.exp(3 * random.nextDouble());
        }
        return Math.exp(0.15 * random.nextGaussian());
    }

    /** Estimate number i of unit i mod 7, recorded i minutes after T0, with random channel RMS (vel sometimes absent). */
    private void complete(Random random, int i, Double chi2) throws Exception {
        String unit = String.format(Locale.ROOT, "unit-%02d", i % 7);
        Instant at = StoreFixture.T0.plusSeconds(60L * i);
        double start = at.getEpochSecond();
        double pos = random.nextDouble() < 0.1 ? 0.0 : Math.exp(0.1 * random.nextGaussian()) * 0.5;
        String vel = random.nextDouble() < 0.3 ? "" : ",\"rms\":" + (chi2 == null ? 0.25 : 0.25 * Math.sqrt(chi2));
        String document = "{\"states\":[{\"name\":\"x\",\"estimate\":1.0}],\"residuals\":{\"channels\":["
                + "{\"output\":\"pos\",\"rms\":" + pos + "},{\"output\":\"vel\"" + vel + "}]}}";
        List<String> flags = new ArrayList<>(FLAG_SETS.get(random.nextInt(FLAG_SETS.size())));
        Submission s = store.traces().submitTrace(new NewTrace(unit, "pump", 1, 3, start, start + 2, new byte[] {1}),
                null, 1000, at);
        ClaimedJob job = store.queue().claimNext(1, at).get(0);
        assertTrue(store.queue().completeIfRunning(job.id(), job.attempt(), StoreFixture.estimate(s.traceId(), unit,
                "pump", 1, start, start + 2, chi2, flags, document), null, at));
    }
}
