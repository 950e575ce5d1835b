package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.jobs.ClaimedJob;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Random;
import java.util.TreeMap;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;

/**
 * The fleet views answer the same on SQLite and on PostgreSQL for the same data: one seeded set
 * of estimates (late uploads, ties in recording time and χ²/dof, units without χ²/dof, unit IDs
 * whose order depends on the collation) is written through each engine's store, and every answer
 * is compared with equals, SQLite's being the reference. Estimate IDs are random per store, so
 * each is renamed by the order it was written in; no two estimates share a recording start and a
 * time written, so an ID never decides an order. The derived rows themselves (states, channels,
 * newest per unit) are compared too: on SQLite they equal what the retired JSON views produced
 * ({@link FleetRowsFromTypedEstimatesTest}), so PostgreSQL's do as well.
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS) // the tests only read: load both stores once
class FleetViewsAgreeAcrossEnginesTest {

    private static final int ESTIMATES = 160;
    private static final List<String> UNITS = units();
    private static final List<List<String>> FLAG_SETS = List.of(List.of(), List.of("few_samples"),
            List.of("model_mismatch", "few_samples"), List.of("clipped"), List.of());
    private static final Instant RECORDED = StoreFixture.T0.minusSeconds(86_400);
    private static final Map<Integer, List<String>> CHANNELS = new TreeMap<>(Map.of(1, List.of("pos", "vel", "none"), 2, List.of("pos")));
    /** Recordings start up to 9 500 s after RECORDED; a unit whose newest started before this is stale. */
    private static final Instant STALE_BEFORE = RECORDED.plusSeconds(9_000);

    @TempDir
    static Path dir; // static: made before @BeforeAll
    Loaded sqlite;
    Loaded postgres;

    @BeforeAll
    void load() throws Exception {
        sqlite = new Loaded(new StoreFixture(dir, Backend.SQLITE));
        postgres = new Loaded(new StoreFixture(dir, Backend.POSTGRESQL));
    }

    @AfterAll
    void close() {
        sqlite.fx.close();
        postgres.fx.close();
    }

    @Test
    void fleet_summaries_are_equal_for_every_window_and_stale_rule() {
        List<TimeFilter> windows = List.of(TimeFilter.NONE, TimeFilter.recorded(RECORDED.plusSeconds(2_000), RECORDED.plusSeconds(9_000)),
                TimeFilter.received(StoreFixture.T0.plusSeconds(3_000), null),
                new TimeFilter(RECORDED.plusSeconds(1_000), null, null, StoreFixture.T0.plusSeconds(8_000)));
        for (TimeFilter window : windows) {
            for (Integer staleVersion : new Integer[] {null, 2}) {
                FleetSummaryQuery q = new FleetSummaryQuery(StoreFixture.FAMILY, CHANNELS, window, staleVersion,
                        STALE_BEFORE, 3);
                FleetSummary expected = sqlite.summary(q);
                assertEquals(expected, postgres.summary(q), window + ", stale by version " + staleVersion);
                assertTrue(expected.versions().get(0).estimates() > 0 || window != TimeFilter.NONE, "data in the window");
            }
        }
        FleetSummary all = sqlite.summary(new FleetSummaryQuery(StoreFixture.FAMILY, CHANNELS, TimeFilter.NONE, null,
                STALE_BEFORE, 3));
        assertTrue(all.stale().count() > 0 && all.versions().get(0).flags().size() == 3, all.toString());
    }

    @Test
    void unit_pages_and_their_cursors_are_equal_in_every_order() {
        for (UnitSort sort : UnitSort.values()) {
            for (UnitFilter filter : List.of(new UnitFilter(StoreFixture.FAMILY, null, null),
                    new UnitFilter(StoreFixture.FAMILY, 2, null), new UnitFilter(StoreFixture.FAMILY, null, "few_samples"))) {
                List<UnitPage> expected = sqlite.walk(filter, sort);
                assertEquals(expected, postgres.walk(filter, sort), sort + " " + filter);
                assertTrue(expected.size() > 1, "more than one page");
            }
        }
        assertEquals(UNITS.size(), sqlite.walk(new UnitFilter(StoreFixture.FAMILY, null, null), UnitSort.UNIT_ID).stream()
                .mapToInt(p -> p.items().size()).sum());
    }

    @Test
    void state_trends_are_equal_for_every_unit() {
        TimeFilter recorded = TimeFilter.recorded(RECORDED.plusSeconds(1_500), RECORDED.plusSeconds(8_000));
        int points = 0;
        for (String unit : UNITS) {
            for (String state : List.of("x", "v")) {
                for (Integer version : new Integer[] {null, 1}) {
                    for (TimeFilter times : List.of(TimeFilter.NONE, recorded)) {
                        List<StatePoint> expected = sqlite.trend(unit, state, version, times);
                        assertEquals(expected, postgres.trend(unit, state, version, times), unit + " " + state);
                        points += expected.size();
                    }
                }
            }
        }
        assertTrue(points > ESTIMATES, "got " + points + " points");
    }

    @Test
    void the_derived_rows_are_equal_row_for_row() throws SQLException {
        for (String sql : List.of("SELECT estimate_id, state, value, standard_error, lower, upper FROM estimate_states",
                "SELECT estimate_id, family, version, channel, window_start, received_at, rms FROM estimate_channels",
                "SELECT estimate_id, family, unit_id, version, window_start, window_end, received_at, created_at,"
                        + " chi2_per_dof, flags FROM unit_latest",
                "SELECT estimate_id, family, version, unit_id, window_start, chi2_per_dof, flags FROM unit_version_latest")) {
            List<String> expected = sqlite.rows(sql);
            assertEquals(expected, postgres.rows(sql), sql);
            assertTrue(expected.size() >= UNITS.size(), sql);
        }
    }

    /** One engine's store with the seeded estimates written, and its estimate IDs renamed "#i" by write order. */
    private static final class Loaded {
        final StoreFixture fx;
        final Map<String, String> names = new HashMap<>();

        Loaded(StoreFixture fx) throws QueueFullException {
            this.fx = fx;
            fx.store.models().publishVersion(StoreFixture.pumpVersion(), StoreFixture.T0);
            Random random = new Random(424242);
            for (int i = 0; i < ESTIMATES; i++) {
                write(i, random);
            }
        }

        private void write(int i, Random random) throws QueueFullException {
            String unit = UNITS.get(random.nextInt(UNITS.size()));
            int version = 1 + random.nextInt(2);
            double start = RECORDED.getEpochSecond() + 500.0 * random.nextInt(20); // repeats: ties in recording time
            Instant received = StoreFixture.T0.plusSeconds(random.nextInt(10_000)); // any order: late uploads
            Instant written = received.plusMillis(ESTIMATES + i); // unique, so no tie reaches the random IDs
            Double chi2 = random.nextInt(8) == 0 ? null : random.nextInt(6) / 2.0;
            List<String> flags = FLAG_SETS.get(random.nextInt(FLAG_SETS.size()));
            String document = document(random);
            Submission s = fx.store.traces().submitTrace(new NewTrace(unit, StoreFixture.FAMILY, version, 3, start, start + 2,
                    new byte[] {(byte) i}), null, Integer.MAX_VALUE, received);
            ClaimedJob job = fx.store.queue().claimNext(1, received).get(0);
            assertTrue(fx.store.queue().completeIfRunning(job.id(), job.attempt(), StoreFixture.estimate(s.traceId(), unit,
                    StoreFixture.FAMILY, version, start, start + 2, chi2, flags, document), null, written));
            names.put(fx.store.estimates().findEstimateForJob(job.id()).orElseThrow().id(), "#" + i);
        }

        FleetSummary summary(FleetSummaryQuery q) {
            FleetSummary s = fx.store.fleet().fleetSummary(q);
            return new FleetSummary(s.versions(), new FleetSummary.StaleUnits(s.stale().count(),
                    s.stale().oldestFirst().stream().map(this::renamed).toList()));
        }

        List<UnitPage> walk(UnitFilter filter, UnitSort sort) {
            List<UnitPage> pages = new ArrayList<>();
            String cursor = null;
            do {
                UnitPage page = fx.store.fleet().fleetUnits(filter, sort, cursor, 7);
                pages.add(new UnitPage(page.items().stream().map(this::renamed).toList(), page.nextCursorOrNull()));
                cursor = page.nextCursorOrNull();
            } while (cursor != null);
            return pages;
        }

        List<StatePoint> trend(String unit, String state, Integer version, TimeFilter times) {
            return fx.store.fleet().stateTrend(unit, state, StoreFixture.FAMILY, version, times, 5).stream()
                    .map(p -> new StatePoint(names.get(p.estimateId()), p.createdAt(), p.receivedAt(), p.version(),
                            p.windowStart(), p.windowEnd(), p.flags(), p.value(), p.standardError(), p.lower(), p.upper()))
                    .toList();
        }

        /** Each row as text, the estimate ID (first column) renamed, sorted. */
        List<String> rows(String sql) throws SQLException {
            List<String> out = new ArrayList<>();
            try (Connection c = fx.raw(); Statement s = c.createStatement(); ResultSet rs = s.executeQuery(sql)) {
                int columns = rs.getMetaData().getColumnCount();
                while (rs.next()) {
                    StringBuilder row = new StringBuilder(names.get(rs.getString(1)));
                    for (int i = 2; i <= columns; i++) {
                        Object value = rs.getObject(i);
                        // SQLite hands back whole numbers as Integer or Long by size; compare their values.
                        row.append('|').append(value instanceof Number n && !(value instanceof Double) ? n.longValue() : value);
                    }
                    out.add(row.toString());
                }
            }
            out.sort(null);
            return out;
        }

        private UnitLatestRow renamed(UnitLatestRow r) {
            return new UnitLatestRow(r.unitId(), r.family(), r.version(), names.get(r.estimateId()), r.windowStart(),
                    r.windowEnd(), r.receivedAt(), r.createdAt(), r.chi2PerDof(), r.flags());
        }
    }

    /** An estimate document as EstimateDocument writes it, with state x always and v and the channels' RMS sometimes. */
    private static String document(Random random) {
        String x = "{\"name\":\"x\",\"estimate\":" + random.nextGaussian() + ",\"standardError\":" + random.nextDouble()
                + ",\"lower\":-3.5,\"upper\":" + random.nextDouble() + "}";
        String v = random.nextBoolean() ? ",{\"name\":\"v\",\"standardError\":0.1,\"lower\":-1,\"upper\":1}" : "";
        String posRms = random.nextInt(4) == 0 ? "" : ",\"rms\":" + random.nextDouble();
        return "{\"formulation\":\"sampled\",\"states\":[" + x + v + "],\"residuals\":{\"chiSquare\":3.0,"
                + "\"degreesOfFreedom\":2,\"channels\":[{\"output\":\"pos\",\"samples\":3,\"sigma\":1.0,\"sigmaSource\":"
                + "\"model\"" + posRms + ",\"ljungBoxLags\":1,\"outliers\":0},{\"output\":\"vel\",\"samples\":3,\"sigma\":1.0,"
                + "\"sigmaSource\":\"model\",\"rms\":" + random.nextDouble() + ",\"ljungBoxLags\":1,\"outliers\":0}]},"
                + "\"flags\":[]}";
    }

    /**
     * Unit IDs whose order is the byte order of their UTF-8 (SQLite's BINARY collation) and would
     * be another under a linguistic collation: case, '-' against '_', digits against letters, non-ASCII.
     */
    private static List<String> units() {
        List<String> units = new ArrayList<>(List.of("unit_a", "unit-B", "Unit-c", "unit-b", "unit-10", "unit-9",
                "\u00fcnit-x", "UNIT-A", "unit.a", "unit a"));
        for (int u = 0; u < 14; u++) {
            units.add(String.format("u-%02d", u));
        }
        return List.copyOf(units);
    }
}
