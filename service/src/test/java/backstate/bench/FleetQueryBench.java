package backstate.bench;

import backstate.App;
import backstate.config.Settings;
import backstate.formats.DocumentSolver;
import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.TraceOptions;
import backstate.formats.TraceReader;
import backstate.store.FleetBaseline;
import backstate.store.FleetBulkLoad;
import backstate.store.FleetSummaryQuery;
import backstate.store.TimeFilter;
import backstate.store.NewModelVersion;
import backstate.store.SqliteDatabase;
import backstate.store.UnitFilter;
import backstate.store.UnitPage;
import backstate.store.UnitSort;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.ByteArrayInputStream;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.time.Clock;
import java.time.Duration;
import java.time.Instant;
import java.time.temporal.ChronoUnit;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Random;
import java.util.concurrent.Callable;

/**
 * Fleet-view query timings on a database of {@code units × perUnit} estimates (default
 * 10 000 × 100 = 10⁶), filled once through the service's schema and write-path SQL, then read
 * through the store (the SQL alone) and over HTTP (what a dashboard sees). Prints Markdown.
 *
 * <p>Data: each unit gets one estimate a day for {@code perUnit} days, version 1 for the first
 * 70 % of days and version 2 after; χ²/dof log-normal about 1 with a heavy tail; flags at
 * realistic rates; every summary is a real estimate document (the demo's RCX-85159 solved
 * once) with its numbers varied, so rows have the service's size (~2.5 kB). Seeded.
 *
 * <p>Run with bench/fleet-queries.sh; a timed query is run {@link #WARMUPS} times untimed, then
 * {@code --repeat} times; the median and the maximum are printed.
 */
public final class FleetQueryBench {
    static final int WARMUPS = 2;
    static final long SEED = 20250303L;
    static final String FAMILY = "reefer-40";
    /** Estimates per transaction while filling. */
    static final int COMMIT_EVERY = 20_000;
    /** The first this fraction of each unit's days are solved with version 1, the rest with version 2. */
    static final double VERSION_1_SHARE = 0.7;
    /** The all-time summary at 10⁶ estimates answers within this (issue 15). */
    static final double ALL_TIME_TARGET_MS = 20.0;

    private final Path database;
    private final int units;
    private final int perUnit;
    private final int repeat;
    private final Instant end;
    private final ObjectMapper json = new ObjectMapper();
    private String allTimeVerdict = "";

    private FleetQueryBench(Path database, int units, int perUnit, int repeat) {
        this.database = database;
        this.units = units;
        this.perUnit = perUnit;
        this.repeat = repeat;
        // The newest estimates are a few minutes old when timing starts, so "last 24 h" holds one day.
        this.end = Instant.now().truncatedTo(ChronoUnit.MINUTES);
    }

    public static void main(String[] args) throws Exception {
        Map<String, String> a = new LinkedHashMap<>(Map.of("database", "/tmp/backstate-fleet-bench.db",
                "units", "10000", "per-unit", "100", "repeat", "7", "reuse", "false", "testData", "test-data"));
        for (int i = 0; i + 1 < args.length; i += 2) {
            if (!args[i].startsWith("--") || !a.containsKey(args[i].substring(2))) {
                throw new IllegalArgumentException("got " + args[i] + ", expected one of --" + String.join(", --", a.keySet()));
            }
            a.put(args[i].substring(2), args[i + 1]);
        }
        FleetQueryBench bench = new FleetQueryBench(Path.of(a.get("database")), Integer.parseInt(a.get("units")),
                Integer.parseInt(a.get("per-unit")), Integer.parseInt(a.get("repeat")));
        if (!Boolean.parseBoolean(a.get("reuse")) || !Files.exists(bench.database)) {
            bench.fill(Path.of(a.get("testData")));
        }
        bench.report();
    }

    // ---- fill

    private void fill(Path testData) throws Exception {
        for (String suffix : List.of("", "-wal", "-shm")) {
            Files.deleteIfExists(Path.of(database + suffix));
        }
        Limits limits = Limits.DEFAULTS;
        ObjectMapper mapper = Json.mapper(limits);
        ModelDocument v1 = mapper.readValue(testData.resolve("demo/models/reefer-40.v1.json").toFile(), ModelDocument.class);
        ModelDocument v2 = mapper.readValue(testData.resolve("demo/models/reefer-40.v2.json").toFile(), ModelDocument.class);
        try (SqliteDatabase store = new SqliteDatabase(database, Clock.systemUTC())) {
            store.models().createFamily(FAMILY, "fleet bench", end);
            for (ModelDocument d : List.of(v1, v2)) {
                var model = d.toModel(limits);
                store.models().publishVersion(new NewModelVersion(FAMILY, d.timeDomain(), model.states(), model.outputs(),
                        model.inputs(), mapper.writeValueAsString(d), "{}"), end);
            }
        }
        ObjectNode template = template(mapper, v1, testData.resolve("demo/traces/RCX-85159.csv"));
        Random random = new Random(SEED);
        long started = System.nanoTime();
        int v1Days = (int) Math.round(perUnit * VERSION_1_SHARE);
        try (FleetBulkLoad load = new FleetBulkLoad(database)) {
            long written = 0;
            for (int day = 0; day < perUnit; day++) {
                int version = day < v1Days ? 1 : 2;
                for (int u = 0; u < units; u++) {
                    // One estimate per unit per day, spread over the day, the last day ending just before now.
                    Instant at = end.minus(Duration.ofDays(perUnit - day)).plusMillis((long) u * 86_400_000L / units);
                    Row row = row(random, version);
                    load.add(unitId(u), FAMILY, version, at, row.chi2, row.flags, document(template, row));
                    if (++written % COMMIT_EVERY == 0) {
                        load.commit();
                    }
                }
                if ((day + 1) % 10 == 0) {
                    System.err.printf(Locale.ROOT, "filled %d of %d days (%.0f s)%n", day + 1, perUnit,
                            (System.nanoTime() - started) / 1e9);
                }
            }
            load.commit();
            System.out.printf(Locale.ROOT, "Filled %,d estimates (%d units × %d) in %.0f s: %.0f µs per estimate for the"
                    + " trace, job and estimate rows, %.0f µs for the fleet views' derived rows.%n%n", written, units,
                    perUnit, (System.nanoTime() - started) / 1e9, load.insertMicrosPerEstimate(),
                    load.deriveMicrosPerEstimate());
        }
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + database); Statement s = c.createStatement()) {
            s.execute("PRAGMA wal_checkpoint(TRUNCATE)");
        }
    }

    /** A real estimate document: the demo's RCX-85159 trace solved with model v1. */
    private static ObjectNode template(ObjectMapper mapper, ModelDocument model, Path csv) throws Exception {
        var parsed = new TraceReader(Limits.DEFAULTS).readCsv(new ByteArrayInputStream(Files.readAllBytes(csv)), model,
                TraceOptions.NONE);
        var solved = (DocumentSolver.Outcome.Solved) DocumentSolver.solve(model, parsed, false, Limits.DEFAULTS);
        return (ObjectNode) mapper.valueToTree(solved.document());
    }

    private record Row(Double chi2, List<String> flags, double[] states, double[] rms) {
    }

    private static Row row(Random random, int version) {
        double tail = random.nextDouble() < 0.02 ? Math.exp(3 * random.nextDouble()) * 10 : 1.0;
        boolean noDof = random.nextDouble() < 0.005;
        double chi2 = Math.exp(0.15 * random.nextGaussian() + (version == 2 ? 0.3 : 0.0)) * tail;
        List<String> flags = new ArrayList<>();
        if (!noDof && random.nextDouble() < 0.002) {
            flags.add("unobservable");
        }
        if (random.nextDouble() < 0.01) {
            flags.add("ill_conditioned");
        }
        if (chi2 > 1.5) {
            flags.add("model_mismatch");
        }
        if (noDof || random.nextDouble() < 0.02) {
            flags.add("few_samples");
        }
        double[] states = {15 + 3 * random.nextGaussian(), 3 + random.nextGaussian(), 8 + 2 * random.nextGaussian(),
                11 + 2 * random.nextGaussian()};
        double[] rms = {0.15 * Math.sqrt(chi2) * (1 + 0.05 * random.nextGaussian()),
                0.15 * Math.sqrt(chi2) * (1 + 0.05 * random.nextGaussian())};
        return new Row(noDof ? null : chi2, flags, states, rms);
    }

    private String document(ObjectNode template, Row row) throws Exception {
        ObjectNode d = template.deepCopy();
        ArrayNode states = (ArrayNode) d.get("states");
        for (int i = 0; i < states.size(); i++) {
            ObjectNode s = (ObjectNode) states.get(i);
            double half = s.get("upper").asDouble() - s.get("estimate").asDouble();
            s.put("estimate", row.states[i]).put("lower", row.states[i] - half).put("upper", row.states[i] + half);
        }
        ArrayNode channels = (ArrayNode) d.get("residuals").get("channels");
        for (int j = 0; j < channels.size(); j++) {
            ((ObjectNode) channels.get(j)).put("rms", row.rms[j]);
        }
        ArrayNode flags = d.putArray("flags");
        row.flags.forEach(flags::add);
        return json.writeValueAsString(d);
    }

    private static String unitId(int u) {
        return String.format(Locale.ROOT, "RCX-%05d", u);
    }

    // ---- report

    private void report() throws Exception {
        long estimates = count("SELECT count(*) FROM estimates");
        System.out.printf(Locale.ROOT, "Database: %,d estimates of %,d units, %.0f MB (%s). SQLite %s, Java %s, %d CPUs.%n%n",
                estimates, count("SELECT count(*) FROM unit_latest"), Files.size(database) / 1e6, database,
                text("SELECT sqlite_version()"), System.getProperty("java.version"), Runtime.getRuntime().availableProcessors());
        printPlans();
        System.out.printf(Locale.ROOT, "%n| query | rows read | median ms | max ms |%n|---|---|---:|---:|%n");
        Instant dayAgo = end.minus(Duration.ofDays(1));
        Instant weekAgo = end.minus(Duration.ofDays(7));
        String middle = unitId(units / 2);
        try (SqliteDatabase store = new SqliteDatabase(database, Clock.systemUTC())) {
            Map<Integer, List<String>> both = new LinkedHashMap<>();
            both.put(1, List.of("return_air", "supply_air"));
            both.put(2, List.of("return_air", "supply_air"));
            Map<Integer, List<String>> v2 = Map.of(2, List.of("return_air", "supply_air"));
            Instant stale = Instant.now().minus(Duration.ofHours(24));
            time("store: summary, last 24 h, both versions", units + " estimates",
                    () -> store.fleet().fleetSummary(new FleetSummaryQuery(FAMILY, both, TimeFilter.recorded(dayAgo, null), null, stale, 50)));
            time("store: summary, last 7 days, both versions", 7 * units + " estimates",
                    () -> store.fleet().fleetSummary(new FleetSummaryQuery(FAMILY, both, TimeFilter.recorded(weekAgo, null), null, stale, 50)));
            FleetSummaryQuery allTime = new FleetSummaryQuery(FAMILY, both, TimeFilter.NONE, null, stale, 50);
            double totals = time("store: summary, all time, both versions (running totals)", units + " units",
                    () -> store.fleet().fleetSummary(allTime));
            double rows = time("store: summary, all time, both versions, from the rows (baseline)", estimates + " estimates",
                    () -> FleetBaseline.fromRows(store, allTime));
            time("store: summary, all time, version 2", units + " units",
                    () -> store.fleet().fleetSummary(new FleetSummaryQuery(FAMILY, v2, TimeFilter.NONE, 2, stale, 50)));
            allTimeVerdict = String.format(Locale.ROOT, "All-time summary at %,d estimates: %.1f ms from the running totals"
                    + " (target <= %.0f ms: %s), %.1f ms from the rows, ratio %.0fx; same answer: %s.", estimates, totals,
                    ALL_TIME_TARGET_MS, totals <= ALL_TIME_TARGET_MS ? "met" : "NOT met", rows, rows / totals,
                    store.fleet().fleetSummary(allTime).equals(FleetBaseline.fromRows(store, allTime)));
            time("store: units, worst χ²/dof first, 50", units + " units",
                    () -> store.fleet().fleetUnits(new UnitFilter(FAMILY, null, null), UnitSort.CHI_SQUARE_DESC, null, 50));
            UnitPage first = store.fleet().fleetUnits(new UnitFilter(FAMILY, null, null), UnitSort.CHI_SQUARE_DESC, null, 50);
            time("store: units, worst first, next page (cursor)", units + " units",
                    () -> store.fleet().fleetUnits(new UnitFilter(FAMILY, null, null), UnitSort.CHI_SQUARE_DESC, first.nextCursorOrNull(), 50));
            time("store: units of version 1, model_mismatch, worst first", units + " units",
                    () -> store.fleet().fleetUnits(new UnitFilter(FAMILY, 1, "model_mismatch"), UnitSort.CHI_SQUARE_DESC, null, 50));
            time("store: units by unit ID, 500", units + " units",
                    () -> store.fleet().fleetUnits(new UnitFilter(FAMILY, null, null), UnitSort.UNIT_ID, null, 500));
            time("store: units, stalest first, 50", units + " units",
                    () -> store.fleet().fleetUnits(new UnitFilter(FAMILY, null, null), UnitSort.LATEST, null, 50));
            time("store: trend of one state, 100 points", perUnit + " estimates",
                    () -> store.fleet().stateTrend(middle, "cargo_core", FAMILY, null, TimeFilter.NONE, 100));
            time("store: trend of one state, version 1 only", perUnit + " estimates",
                    () -> store.fleet().stateTrend(middle, "cargo_core", FAMILY, 1, TimeFilter.NONE, 100));
            percentileRoutes(estimates);
        }
        http(dayAgo, middle);
        System.out.printf(Locale.ROOT, "%n%s%n", allTimeVerdict);
    }

    /** The alternative to Java percentiles: SQLite's ORDER BY … LIMIT 1 OFFSET k, once per quantile. */
    private void percentileRoutes(long estimates) throws Exception {
        String window = " FROM estimates WHERE family = ? AND version = ? AND created_at >= ? AND created_at < ?"
                + " AND chi2_per_dof IS NOT NULL";
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + database)) {
            long n = single(c, "SELECT count(*)" + window, 1);
            time("percentiles in Java: read the χ²/dof column, sort (v1, all time)", n + " values", () -> {
                try (PreparedStatement ps = bind(c, "SELECT chi2_per_dof" + window, 1)) {
                    double[] v = new double[(int) n];
                    int k = 0;
                    try (ResultSet rs = ps.executeQuery()) {
                        while (rs.next()) {
                            v[k++] = rs.getDouble(1);
                        }
                    }
                    Arrays.sort(v, 0, k);
                    return v[k / 2];
                }
            });
            time("percentiles in SQL: ORDER BY … OFFSET, median and p95 (v1, all time)", n + " values", () -> {
                double[] out = new double[2];
                long[] offsets = {(n - 1) / 2, (long) Math.floor((n - 1) * 0.95)};
                for (int i = 0; i < 2; i++) {
                    try (PreparedStatement ps = bind(c, "SELECT chi2_per_dof" + window
                            + " ORDER BY chi2_per_dof LIMIT 1 OFFSET " + offsets[i], 1);
                         ResultSet rs = ps.executeQuery()) {
                        rs.next();
                        out[i] = rs.getDouble(1);
                    }
                }
                return out;
            });
        }
    }

    /** The same reads over HTTP against a server on the file, as a dashboard makes them. */
    private void http(Instant dayAgo, String unit) throws Exception {
        Settings settings = Settings.from(new String[] {"--host", "127.0.0.1", "--port", "0", "--database",
                database.toString(), "--workers", "1", "--auth", "off"}, Map.of());
        try (App app = new App(settings, Clock.systemUTC()).start(settings)) {
            HttpClient client = HttpClient.newHttpClient();
            String base = "http://127.0.0.1:" + app.port();
            Map<String, String> paths = new LinkedHashMap<>();
            paths.put("HTTP: GET /v1/fleet/reefer-40/summary?from=<24 h ago>", "/v1/fleet/reefer-40/summary?from=" + dayAgo);
            paths.put("HTTP: GET /v1/fleet/reefer-40/summary (all time)", "/v1/fleet/reefer-40/summary");
            paths.put("HTTP: GET /v1/fleet/reefer-40/units?limit=50", "/v1/fleet/reefer-40/units?limit=50");
            paths.put("HTTP: GET /v1/fleet/reefer-40/units?version=2&flag=model_mismatch",
                    "/v1/fleet/reefer-40/units?version=2&flag=model_mismatch");
            paths.put("HTTP: GET /v1/units/{unitId}/trend?state=cargo_core", "/v1/units/" + unit + "/trend?state=cargo_core");
            for (Map.Entry<String, String> p : paths.entrySet()) {
                HttpRequest request = HttpRequest.newBuilder(URI.create(base + p.getValue())).GET().build();
                time(p.getKey(), "", () -> {
                    HttpResponse<String> r = client.send(request, HttpResponse.BodyHandlers.ofString());
                    if (r.statusCode() != 200) {
                        throw new IllegalStateException(p.getValue() + ": " + r.statusCode() + " " + r.body());
                    }
                    return r.body().length();
                });
            }
        }
    }

    private void printPlans() throws SQLException {
        Map<String, String> statements = new LinkedHashMap<>();
        String window = " WHERE family = 'reefer-40' AND version = 1 AND window_start >= -1e300 AND window_start < 1e300"
                + " AND received_at >= 0 AND received_at < 9e18";
        statements.put("summary counts", "SELECT count(*), count(DISTINCT unit_id) FROM estimates" + window);
        statements.put("summary χ²/dof column", "SELECT chi2_per_dof FROM estimates" + window + " AND chi2_per_dof IS NOT NULL");
        statements.put("summary flagged rows", "SELECT unit_id, flags FROM estimates" + window + " AND flags <> ''");
        statements.put("summary channel RMS", "SELECT rms FROM estimate_channels WHERE family = 'reefer-40' AND version = 1"
                + " AND channel = 'return_air' AND window_start >= -1e300 AND window_start < 1e300"
                + " AND received_at >= 0 AND received_at < 9e18 AND rms IS NOT NULL");
        statements.put("summary traces", "SELECT count(*) FROM traces" + window);
        statements.put("totals: units and estimates", "SELECT count(*), sum(estimates) FROM fleet_unit_estimates"
                + " WHERE family = 'reefer-40' AND version = 1");
        statements.put("totals: χ²/dof bins", "SELECT estimates, low_value FROM fleet_chi2_bins"
                + " WHERE family = 'reefer-40' AND version = 1 ORDER BY bin");
        statements.put("totals: order statistics from a bin", "SELECT chi2_per_dof FROM estimates WHERE family = 'reefer-40'"
                + " AND version = 1 AND chi2_per_dof >= 1.0 ORDER BY chi2_per_dof LIMIT 2 OFFSET 100");
        statements.put("totals: a flag's first units", "SELECT unit_id FROM fleet_unit_flags WHERE family = 'reefer-40'"
                + " AND version = 1 AND flag = 'model_mismatch' ORDER BY unit_id LIMIT 50");
        statements.put("trend", "SELECT e.id, s.value FROM estimates e JOIN estimate_states s ON s.estimate_id = e.id"
                + " AND s.state = 'cargo_core' WHERE e.unit_id = 'RCX-00001' AND e.family = 'reefer-40'"
                + " ORDER BY e.window_start DESC, e.created_at DESC, e.id DESC LIMIT 100");
        System.out.println("Query plans (EXPLAIN QUERY PLAN):");
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + database); Statement s = c.createStatement()) {
            for (Map.Entry<String, String> e : statements.entrySet()) {
                List<String> steps = new ArrayList<>();
                try (ResultSet rs = s.executeQuery("EXPLAIN QUERY PLAN " + e.getValue())) {
                    while (rs.next()) {
                        steps.add(rs.getString("detail"));
                    }
                }
                System.out.println("- " + e.getKey() + ": " + String.join("; ", steps));
            }
        }
    }

    /** Prints the median and maximum of the timed runs; returns the median in ms. */
    private double time(String name, String rows, Callable<?> query) throws Exception {
        for (int i = 0; i < WARMUPS; i++) {
            query.call();
        }
        double[] ms = new double[repeat];
        for (int i = 0; i < repeat; i++) {
            long t0 = System.nanoTime();
            query.call();
            ms[i] = (System.nanoTime() - t0) / 1e6;
        }
        Arrays.sort(ms);
        System.out.printf(Locale.ROOT, "| %s | %s | %.1f | %.1f |%n", name, rows, ms[repeat / 2], ms[repeat - 1]);
        return ms[repeat / 2];
    }

    private PreparedStatement bind(Connection c, String sql, int version) throws SQLException {
        PreparedStatement ps = c.prepareStatement(sql);
        ps.setString(1, FAMILY);
        ps.setInt(2, version);
        ps.setLong(3, Long.MIN_VALUE);
        ps.setLong(4, Long.MAX_VALUE);
        return ps;
    }

    private long single(Connection c, String sql, int version) throws SQLException {
        try (PreparedStatement ps = bind(c, sql, version); ResultSet rs = ps.executeQuery()) {
            rs.next();
            return rs.getLong(1);
        }
    }

    private long count(String sql) throws SQLException {
        return Long.parseLong(text(sql));
    }

    private String text(String sql) throws SQLException {
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + database);
             Statement s = c.createStatement(); ResultSet rs = s.executeQuery(sql)) {
            rs.next();
            return rs.getString(1);
        }
    }
}
