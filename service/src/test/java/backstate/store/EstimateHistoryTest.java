package backstate.store;

import backstate.jobs.NewEstimate;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;

import backstate.jobs.ClaimedJob;
import java.nio.charset.StandardCharsets;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Base64;
import java.util.Comparator;
import java.util.List;
import java.util.function.Predicate;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;

/** A unit's history in recording order (window start, then time written, then id), its filters and its cursor. */
class EstimateHistoryTest extends StoreContractTestBase {

    private static final String UNIT = "unit-A";
    private static final String OTHER_UNIT = "unit-B";
    private static final int ESTIMATES_FOR_UNIT = 23;
    private static final int ESTIMATES_FOR_OTHER_UNIT = 5;
    private static final Comparator<EstimateRow> NEWEST_FIRST = Comparator.comparingDouble(EstimateRow::windowStart)
            .thenComparing(EstimateRow::createdAt).thenComparing(EstimateRow::id).reversed();
    /** Recordings start here, a day before the first upload. */
    private static final Instant RECORDED = StoreFixture.T0.minus(java.time.Duration.ofDays(1));

    List<EstimateRow> written = new ArrayList<>();

    @BeforeEach
    void seed() throws Exception {
        store.models().publishVersion(StoreFixture.pumpVersion(), StoreFixture.T0);
        store.models().createFamily("fan", "", StoreFixture.T0);
        store.models().publishVersion(new NewModelVersion("fan", "continuous", 1, 1, 0, "{}", "{}"), StoreFixture.T0);
        for (int i = 0; i < ESTIMATES_FOR_UNIT; i++) {
            // Uploaded in another order than recorded; two estimates share each recording and upload
            // time, so ties on window start are broken by created_at and those on both by id.
            written.add(writeEstimate(UNIT, recording(i / 2 % 5), StoreFixture.T0.plusSeconds(i / 2), familyOf(i),
                    versionOf(i), flagsOf(i)));
        }
        for (int i = 0; i < ESTIMATES_FOR_OTHER_UNIT; i++) {
            writeEstimate(OTHER_UNIT, recording(i), StoreFixture.T0.plusSeconds(i), "pump", 1, List.of("clipped"));
        }
    }


    @Test
    void unfiltered_history_returns_every_row_once_newest_first_at_any_page_size() {
        for (int limit : new int[] {1, 4, ESTIMATES_FOR_UNIT, 100}) {
            assertEquals(expected(row -> true), walk(EstimateFilter.NONE, limit), "page size " + limit);
        }
    }

    @Test
    void filtered_history_returns_exactly_the_matching_rows_across_pages() {
        Instant from = StoreFixture.T0.plusSeconds(3);
        Instant to = StoreFixture.T0.plusSeconds(9);
        double recordedFrom = recording(3).getEpochSecond();
        double recordedTo = recording(1).getEpochSecond();
        assertEquals(expected(r -> r.family().equals("pump")), walk(filter("pump", null, TimeFilter.NONE, null), 4));
        assertEquals(expected(r -> r.family().equals("pump") && r.version() == 2),
                walk(filter("pump", 2, TimeFilter.NONE, null), 4));
        assertEquals(expected(r -> r.windowStart() >= recordedFrom && r.windowStart() < recordedTo),
                walk(filter(null, null, TimeFilter.recorded(recording(3), recording(1)), null), 4));
        assertEquals(expected(r -> !r.receivedAt().isBefore(from) && r.receivedAt().isBefore(to)),
                walk(filter(null, null, TimeFilter.received(from, to), null), 4));
        assertEquals(expected(r -> r.windowStart() >= recordedFrom && !r.receivedAt().isBefore(from)),
                walk(filter(null, null, new TimeFilter(recording(3), null, from, null), null), 3));
        assertEquals(expected(r -> r.flags().contains("clipped")), walk(filter(null, null, TimeFilter.NONE, "clipped"), 4));
        assertEquals(expected(r -> r.family().equals("pump") && r.flags().contains("low_excitation")),
                walk(filter("pump", null, TimeFilter.NONE, "low_excitation"), 3));
    }

    @Test
    void a_flag_filter_matches_whole_flags_only() {
        assertEquals(List.of(), walk(filter(null, null, TimeFilter.NONE, "low"), 10));
        assertEquals(List.of(), walk(filter(null, null, TimeFilter.NONE, "excitation"), 10));
    }

    @Test
    void pages_stay_stable_while_newer_estimates_arrive() throws Exception {
        EstimatePage first = store.estimates().estimateHistory(UNIT, EstimateFilter.NONE, null, 5);
        List<String> seen = new ArrayList<>(ids(first.items()));
        for (int i = 0; i < 3; i++) {
            writeEstimate(UNIT, recording(-1 - i), StoreFixture.T0.plusSeconds(100 + i), "pump", 1, List.of());
        }
        String cursor = first.nextCursorOrNull();
        while (cursor != null) {
            EstimatePage page = store.estimates().estimateHistory(UNIT, EstimateFilter.NONE, cursor, 5);
            seen.addAll(ids(page.items()));
            cursor = page.nextCursorOrNull();
        }
        assertEquals(ids(expected(row -> true)), seen);
    }

    @Test
    void an_estimate_reads_back_field_for_field_by_id_job_and_unit() throws Exception {
        Instant at = StoreFixture.T0.plusSeconds(500);
        Submission s = store.traces().submitTrace(StoreFixture.trace("unit-C"), null, 10, at);
        ClaimedJob job = store.queue().claimNext(1, at).get(0);
        NewEstimate given = StoreFixture.estimate(s.traceId(), "unit-C", "pump", 2, -1.5, 4.25, null,
                List.of("clipped", "low_excitation"), "{\"x0\":[1,2]}");
        store.queue().completeIfRunning(job.id(), job.attempt(), given, null, at.plusMillis(7));

        EstimateRow row = store.estimates().latestEstimate("unit-C").orElseThrow();
        assertEquals(List.of(job.id(), s.traceId(), "unit-C", "pump", 2, at.plusMillis(7), at, -1.5, 4.25,
                        List.of("clipped", "low_excitation"), "{\"x0\":[1,2]}"),
                List.of(row.jobId(), row.traceId(), row.unitId(), row.family(), row.version(), row.createdAt(),
                        row.receivedAt(), row.windowStart(), row.windowEnd(), row.flags(), row.summaryJson()));
        assertNull(row.chi2PerDof());
        assertEquals(row.id(), store.estimates().findEstimate(row.id()).orElseThrow().id());
        assertEquals(row.id(), store.estimates().findEstimateForJob(job.id()).orElseThrow().id());
    }

    @Test
    void the_latest_estimate_is_the_newest_recording_with_ties_broken_by_time_written_then_id() {
        assertEquals(expected(row -> true).get(0).id(), store.estimates().latestEstimate(UNIT).orElseThrow().id());
    }

    @Test
    void the_last_page_has_no_cursor() {
        EstimatePage all = store.estimates().estimateHistory(UNIT, EstimateFilter.NONE, null, ESTIMATES_FOR_UNIT);
        assertEquals(ESTIMATES_FOR_UNIT, all.items().size());
        assertNull(all.nextCursorOrNull());
    }

    @Test
    void a_made_up_cursor_is_rejected_as_the_clients_error() {
        String notBase64 = "***";
        String noSeparator = Base64.getUrlEncoder().encodeToString("12345".getBytes(StandardCharsets.UTF_8));
        String notANumber = Base64.getUrlEncoder().encodeToString("soon:abc".getBytes(StandardCharsets.UTF_8));
        for (String cursor : List.of(notBase64, noSeparator, notANumber)) {
            InvalidCursorException e = assertThrows(InvalidCursorException.class,
                    () -> store.estimates().estimateHistory(UNIT, EstimateFilter.NONE, cursor, 4));
            assertEquals("got cursor '" + cursor + "', expected one returned by a previous page", e.getMessage());
        }
    }

    @Test
    void a_unit_without_estimates_has_an_empty_history() {
        assertEquals(new EstimatePage(List.of(), null), store.estimates().estimateHistory("unit-Z", EstimateFilter.NONE, null, 4));
        assertEquals(java.util.Optional.empty(), store.estimates().latestEstimate("unit-Z"));
    }

    private List<EstimateRow> walk(EstimateFilter filter, int limit) {
        List<EstimateRow> rows = new ArrayList<>();
        String cursor = null;
        do {
            EstimatePage page = store.estimates().estimateHistory(UNIT, filter, cursor, limit);
            rows.addAll(page.items());
            cursor = page.nextCursorOrNull();
        } while (cursor != null);
        return rowsAsWritten(rows);
    }

    /** Records with byte[] compare by identity, so compare rows through the ones we wrote. */
    private List<EstimateRow> rowsAsWritten(List<EstimateRow> rows) {
        return rows.stream().map(r -> written.stream().filter(w -> w.id().equals(r.id())).findFirst()
                .orElseThrow(() -> new AssertionError("row not written for this unit: " + r))).toList();
    }

    private List<EstimateRow> expected(Predicate<EstimateRow> filter) {
        return written.stream().filter(filter).sorted(NEWEST_FIRST).toList();
    }

    private static List<String> ids(List<EstimateRow> rows) {
        return rows.stream().map(EstimateRow::id).toList();
    }

    /** A trace recorded from {@code recorded} for 2 s, received and estimated at {@code at}. */
    private EstimateRow writeEstimate(String unit, Instant recorded, Instant at, String family, int version,
                                      List<String> flags) throws QueueFullException {
        double start = recorded.getEpochSecond();
        Submission s = store.traces().submitTrace(new NewTrace(unit, family, version, 3, start, start + 2, new byte[] {1}), null, 10, at);
        ClaimedJob job = store.queue().claimNext(1, at).get(0);
        store.queue().completeIfRunning(job.id(), job.attempt(), StoreFixture.estimate(s.traceId(), unit, family, version, start,
                start + 2, 1.25, flags, "{\"at\":\"" + at + "\"}"), null, at);
        return store.estimates().findEstimateForJob(job.id()).orElseThrow();
    }

    /** The start of recording k: ten minutes apart, counting back from recording 0 (k < 0 are later ones). */
    private static Instant recording(int k) {
        return RECORDED.minusSeconds(600L * k);
    }

    private static EstimateFilter filter(String family, Integer version, TimeFilter times, String flag) {
        return new EstimateFilter(family, version, times, flag);
    }

    private static String familyOf(int i) {
        return i % 3 == 0 ? "fan" : "pump";
    }

    private static int versionOf(int i) {
        return i % 3 == 0 ? 1 : 1 + i % 2;
    }

    private static List<String> flagsOf(int i) {
        switch (i % 4) {
            case 0:
                return List.of("low_excitation");
            case 1:
                return List.of("low_excitation", "clipped");
            default:
                return List.of();
        }
    }
}
