package backstate.store;

import backstate.jobs.NewEstimate;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.jobs.ClaimedJob;
import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.junit.jupiter.api.Test;

/**
 * The fleet views' derived rows: written with the estimate in its transaction and only then,
 * newest recording wins under late uploads and late writes, filled for estimates older than the
 * migrations, and the unit list's keyset paging in every order. Traces here record from the
 * moment they are received unless a test says otherwise. Runs on both engines; filling the rows of
 * a file from before the fleet views is SQLite's migration, tested in {@link SchemaTest}.
 */
class FleetStoreTest extends StoreContractTestBase {

    /** An estimate document as EstimateDocument writes it (only the fields the fleet views read matter). */
    static final String DOCUMENT = """
            {"formulation":"sampled","states":[
             {"name":"x","unit":"m","estimate":1.25,"standardError":0.5,"standardErrorScaled":0.6,"lower":0.27,"upper":2.23},
             {"name":"v","unit":"m/s","standardError":0.1,"lower":-1,"upper":1}],
             "residuals":{"chiSquare":3.0,"degreesOfFreedom":2,"channels":[
             {"output":"pos","samples":3,"sigma":1.0,"sigmaSource":"model","rms":0.75,"ljungBoxLags":1,"outliers":0},
             {"output":"vel","samples":0,"sigma":1.0,"sigmaSource":"model","ljungBoxLags":0,"outliers":0}]},
             "flags":["few_samples"]}""";



    @Test
    void a_completed_job_writes_the_states_channels_and_newest_rows_of_its_estimate() throws Exception {
        String id = complete("unit-1", StoreFixture.T0, 1.5, List.of("few_samples"), DOCUMENT).id();
        assertEquals(List.of(List.of("v", "null", "0.1", "-1.0", "1.0"), List.of("x", "1.25", "0.5", "0.27", "2.23")),
                rows("SELECT state, value, standard_error, lower, upper FROM estimate_states WHERE estimate_id = ?"
                        + " ORDER BY state", id));
        // "vel" had no sample, so the document has no rms for it: the row is kept with NULL.
        String recorded = String.valueOf((double) StoreFixture.T0.getEpochSecond());
        String received = String.valueOf(StoreFixture.T0.toEpochMilli());
        assertEquals(List.of(List.of("pump", "1", "pos", recorded, received, "0.75"),
                        List.of("pump", "1", "vel", recorded, received, "null")),
                rows("SELECT family, version, channel, window_start, received_at, rms FROM estimate_channels"
                        + " WHERE estimate_id = ? ORDER BY channel", id));
        assertEquals(List.of(List.of("unit-1", "1", id, "1.5", "few_samples")),
                rows("SELECT unit_id, version, estimate_id, chi2_per_dof, flags FROM unit_latest WHERE family = ?", "pump"));
        assertEquals(1, fx.count("SELECT count(*) FROM unit_version_latest WHERE estimate_id = ?", id));
    }

    @Test
    void a_completion_that_lost_its_job_writes_no_derived_rows() throws Exception {
        Submission s = store.traces().submitTrace(StoreFixture.trace("unit-1"), null, 10, StoreFixture.T0);
        ClaimedJob job = store.queue().claimNext(1, StoreFixture.T0).get(0);
        assertFalse(store.queue().completeIfRunning(job.id(), job.attempt() + 1,
                StoreFixture.estimate(s.traceId(), "unit-1", "pump", 1, List.of(), DOCUMENT), null, StoreFixture.T0));
        for (String table : List.of("estimate_states", "estimate_channels", "unit_latest", "unit_version_latest")) {
            assertEquals(0, fx.rows(table), table);
        }
    }

    @Test
    void a_summary_that_is_not_a_document_still_stores_the_estimate_without_states() throws Exception {
        for (String summary : List.of("not json", "{}", "{\"states\":{\"x\":1}}", "{\"states\":[1,{\"name\":2}]}")) {
            EstimateRow row = complete("unit-" + summary.length(), StoreFixture.T0, null, List.of(), summary);
            assertEquals(0, fx.count("SELECT count(*) FROM estimate_states WHERE estimate_id = ?", row.id()), summary);
            assertEquals(1, fx.count("SELECT count(*) FROM unit_latest WHERE estimate_id = ?", row.id()), summary);
        }
    }

    @Test
    void an_older_recording_uploaded_later_does_not_replace_the_newest() throws Exception {
        EstimateRow newer = complete("unit-1", StoreFixture.T0.plusSeconds(60), 2.0, List.of(), DOCUMENT);
        // Recorded at T0, received and estimated at T0 + 120 s: a late upload.
        complete("unit-1", StoreFixture.T0, StoreFixture.T0.plusSeconds(120), 9.0, List.of("model_mismatch"));
        UnitLatestRow latest = store.fleet().fleetUnits(new UnitFilter("pump", null, null), UnitSort.UNIT_ID, null, 10).items().get(0);
        assertEquals(List.of(newer.id(), 2.0, List.of(), (double) StoreFixture.T0.plusSeconds(60).getEpochSecond()),
                List.of(latest.estimateId(), latest.chi2PerDof(), latest.flags(), latest.windowStart()));
        assertEquals(newer.id(), store.estimates().latestEstimate("unit-1").orElseThrow().id());
        EstimateRow newest = complete("unit-1", StoreFixture.T0.plusSeconds(180), 3.0, List.of(), DOCUMENT);
        assertEquals(newest.id(), store.fleet().fleetUnits(new UnitFilter("pump", 1, null), UnitSort.UNIT_ID, null, 10)
                .items().get(0).estimateId());
    }

    @Test
    void the_same_recording_estimated_again_replaces_the_earlier_estimate() throws Exception {
        complete("unit-1", StoreFixture.T0, StoreFixture.T0, 2.0, List.of());
        EstimateRow again = complete("unit-1", StoreFixture.T0, StoreFixture.T0.plusSeconds(30), 4.0, List.of());
        assertEquals(again.id(), store.fleet().fleetUnits(new UnitFilter("pump", null, null), UnitSort.UNIT_ID, null, 10)
                .items().get(0).estimateId());
    }

    @Test
    void units_page_through_every_order_once_each_at_any_page_size() throws Exception {
        Random random = new Random(11);
        List<UnitLatestRow> expected = new ArrayList<>();
        for (int u = 0; u < 23; u++) {
            // Ties in χ² and in time, and units without χ², so every tie-break is exercised.
            Double chi2 = u % 7 == 3 ? null : (double) (random.nextInt(5));
            Instant at = StoreFixture.T0.plusSeconds(random.nextInt(4));
            EstimateRow row = complete(String.format("unit-%02d", u), at, chi2, List.of(), DOCUMENT);
            expected.add(new UnitLatestRow(row.unitId(), "pump", 1, row.id(), row.windowStart(), row.windowEnd(),
                    row.receivedAt(), row.createdAt(), chi2, List.of()));
        }
        Comparator<UnitLatestRow> byId = Comparator.comparing(UnitLatestRow::unitId);
        Comparator<UnitLatestRow> byTime = Comparator.comparingDouble(UnitLatestRow::windowStart).thenComparing(byId);
        Comparator<UnitLatestRow> nullsLast = Comparator.comparing(r -> r.chi2PerDof() == null);
        Map<UnitSort, Comparator<UnitLatestRow>> orders = Map.of(
                UnitSort.UNIT_ID, byId,
                UnitSort.UNIT_ID_DESC, byId.reversed(),
                UnitSort.LATEST, byTime,
                UnitSort.LATEST_DESC, byTime.reversed(),
                UnitSort.CHI_SQUARE, nullsLast.thenComparing(r -> r.chi2PerDof() == null ? 0 : r.chi2PerDof()).thenComparing(byId),
                UnitSort.CHI_SQUARE_DESC, nullsLast.thenComparing(r -> r.chi2PerDof() == null ? 0 : -r.chi2PerDof()).thenComparing(byId));
        for (Map.Entry<UnitSort, Comparator<UnitLatestRow>> order : orders.entrySet()) {
            List<String> want = expected.stream().sorted(order.getValue()).map(UnitLatestRow::unitId).toList();
            for (int limit : new int[] {1, 4, 23, 100}) {
                assertEquals(want, walk(order.getKey(), limit), order.getKey() + " by " + limit);
            }
        }
    }

    @Test
    void a_cursor_of_another_order_or_made_up_is_refused() {
        String other = new UnitCursor(UnitSort.LATEST, List.of(1.0, "u")).encode();
        for (String cursor : List.of(other, "***", "Q0hJX1NRVUFSRQ")) {
            assertThrows(InvalidCursorException.class, () -> store.fleet().fleetUnits(new UnitFilter("pump", null, null),
                    UnitSort.CHI_SQUARE, cursor, 5), cursor);
        }
    }

    @Test
    void summary_counts_the_window_and_stale_units_in_one_read() throws Exception {
        complete("unit-1", StoreFixture.T0, 1.0, List.of("model_mismatch"), DOCUMENT);
        complete("unit-2", StoreFixture.T0.plusSeconds(10), 3.0, List.of("model_mismatch", "few_samples"), DOCUMENT);
        complete("unit-2", StoreFixture.T0.plusSeconds(20), 5.0, List.of(), DOCUMENT);
        FleetSummary s = store.fleet().fleetSummary(new FleetSummaryQuery("pump", Map.of(1, List.of("pos", "vel")),
                TimeFilter.recorded(StoreFixture.T0, StoreFixture.T0.plusSeconds(20)), null, StoreFixture.T0.plusSeconds(15), 1));
        FleetSummary.VersionActivity v = s.versions().get(0);
        // [T0, T0 + 20 s) holds the first two recordings; the traces were recorded at T0, T0 + 10 s and T0 + 20 s.
        assertEquals(List.of(2L, 2L, 2L), List.of(v.estimates(), v.units(), v.traces()));
        assertEquals(new FleetSummary.Distribution(2, 2.0, 2.9, 3.0), v.chiSquarePerDof());
        assertEquals(new FleetSummary.Distribution(2, 0.75, 0.75, 0.75), v.channelRms().get("pos"));
        assertEquals(new FleetSummary.Distribution(0, null, null, null), v.channelRms().get("vel"));
        assertEquals(new FleetSummary.FlaggedUnits(2, 2, List.of("unit-1")), v.flags().get("model_mismatch"));
        assertEquals(new FleetSummary.FlaggedUnits(1, 1, List.of("unit-2")), v.flags().get("few_samples"));
        // Newest recording per unit: unit-1 at T0 (before T0 + 15 s: stale), unit-2 at T0 + 20 s.
        assertEquals(1, s.stale().count());
        assertEquals("unit-1", s.stale().oldestFirst().get(0).unitId());
    }

    @Test
    void summary_windows_are_recording_time_and_received_time_is_a_filter_of_its_own() throws Exception {
        complete("unit-1", StoreFixture.T0.plusSeconds(100), 1.0, List.of(), DOCUMENT);
        // A late upload: recorded at T0, received at T0 + 200 s.
        complete("unit-2", StoreFixture.T0, StoreFixture.T0.plusSeconds(200), 3.0, List.of("model_mismatch"));
        Map<Integer, List<String>> pos = Map.of(1, List.of("pos"));
        Instant stale = StoreFixture.T0;
        FleetSummary.VersionActivity recordedFirst = store.fleet().fleetSummary(new FleetSummaryQuery("pump", pos,
                TimeFilter.recorded(StoreFixture.T0, StoreFixture.T0.plusSeconds(50)), null, stale, 5)).versions().get(0);
        assertEquals(List.of(1L, 1L, 1L, 3.0), List.of(recordedFirst.estimates(), recordedFirst.units(),
                recordedFirst.traces(), recordedFirst.chiSquarePerDof().max()));
        FleetSummary.VersionActivity receivedLast = store.fleet().fleetSummary(new FleetSummaryQuery("pump", pos,
                TimeFilter.received(StoreFixture.T0.plusSeconds(150), null), null, stale, 5)).versions().get(0);
        assertEquals(List.of(1L, 1L, 1L, 3.0, 1), List.of(receivedLast.estimates(), receivedLast.units(),
                receivedLast.traces(), receivedLast.chiSquarePerDof().max(), receivedLast.channelRms().get("pos").count()));
        FleetSummary.VersionActivity both = store.fleet().fleetSummary(new FleetSummaryQuery("pump", pos,
                new TimeFilter(StoreFixture.T0.plusSeconds(50), null, StoreFixture.T0.plusSeconds(150), null), null, stale,
                5)).versions().get(0);
        assertEquals(List.of(0L, 0L, 0), List.of(both.estimates(), both.traces(), both.channelRms().get("pos").count()));
    }

    private List<String> walk(UnitSort sort, int limit) {
        List<String> ids = new ArrayList<>();
        String cursor = null;
        do {
            UnitPage page = store.fleet().fleetUnits(new UnitFilter("pump", null, null), sort, cursor, limit);
            page.items().forEach(r -> ids.add(r.unitId()));
            cursor = page.nextCursorOrNull();
        } while (cursor != null);
        return ids;
    }

    /** A trace recorded from {@code at} for 2 s, received and estimated at {@code at}. */
    private EstimateRow complete(String unit, Instant at, Double chi2, List<String> flags, String summary) throws Exception {
        return complete(unit, at, at, chi2, flags, summary);
    }

    /** A trace recorded from {@code recorded}, received and estimated at {@code received}, with {@link #DOCUMENT}. */
    private EstimateRow complete(String unit, Instant recorded, Instant received, Double chi2, List<String> flags)
            throws Exception {
        return complete(unit, recorded, received, chi2, flags, DOCUMENT);
    }

    private EstimateRow complete(String unit, Instant recorded, Instant received, Double chi2, List<String> flags,
                                 String summary) throws Exception {
        double start = recorded.getEpochSecond();
        Submission s = store.traces().submitTrace(new NewTrace(unit, "pump", 1, 3, start, start + 2, new byte[] {1}), null, 100, received);
        ClaimedJob job = store.queue().claimNext(1, received).get(0);
        assertTrue(store.queue().completeIfRunning(job.id(), job.attempt(), StoreFixture.estimate(s.traceId(), unit, "pump", 1, start,
                start + 2, chi2, flags, summary), null, received));
        return store.estimates().findEstimateForJob(job.id()).orElseThrow();
    }

    private List<List<String>> rows(String sql, Object... params) throws SQLException {
        List<List<String>> out = new ArrayList<>();
        try (Connection c = fx.raw(); PreparedStatement ps = Sql.bind(c.prepareStatement(sql), params);
             ResultSet rs = ps.executeQuery()) {
            int columns = rs.getMetaData().getColumnCount();
            while (rs.next()) {
                List<String> row = new ArrayList<>();
                for (int i = 1; i <= columns; i++) {
                    row.add(String.valueOf(rs.getObject(i)));
                }
                out.add(row);
            }
        }
        return out;
    }
}
