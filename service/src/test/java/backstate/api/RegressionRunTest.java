package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.cli.DemoLoader;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;

/**
 * Regression runs end to end on a real server with the demo fleet (20 traces posted under v1).
 * Check values: per-unit χ²/dof under v1 and v2 from the table generate_demo.py printed (numpy
 * least squares, test-data/demo/README.md), v1's χ² and degrees of freedom from fleet.json.
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class RegressionRunTest {
    static final String FAMILY = "reefer-40";
    /** Our QR against numpy's lstsq on the same rows: as in TraceLifecycleTest, far above κ·eps. */
    static final double REFERENCE_TOLERANCE = 1e-8;
    /**
     * A version listing the same outputs in another order solves the same rows in another order:
     * equal up to rounding (κ ≈ 1e3 times eps), far inside this bound.
     */
    static final double REORDERED_TOLERANCE = 1e-9;
    /**
     * Units whose χ²/dof rises by more than this count as worse in the v1→v2 run. The README table
     * has no Δ between 0.40 and 14.5, so two-decimal rounding cannot move a unit across it.
     */
    static final double CHI2_TOLERANCE = 1.0;
    /** One trace per unit: the fleet as loaded, whatever another test posted since. */
    static final Map<String, Object> LATEST = Map.of("latestPerUnit", 1);

    TestServer server;
    JsonNode fleet;
    int copyOfV1;
    int statesRenamed;
    int outputsSwapped;

    @BeforeAll
    void start(@TempDir Path dir) throws Exception {
        server = new TestServer(dir);
        new DemoLoader(server.base()).load();
        fleet = server.mapper.readTree(DemoVersions.DEMO.resolve("fleet.json").toFile());
        copyOfV1 = publish(DemoVersions.v1(server.mapper));
        statesRenamed = publish(DemoVersions.v1WithStateRenamed(server.mapper));
        outputsSwapped = publish(DemoVersions.v1WithOutputsSwapped(server.mapper));
    }

    @AfterAll
    void stop() {
        server.close();
    }

    int publish(ObjectNode document) {
        TestServer.Reply r = server.postJson("/v1/models/" + FAMILY + "/versions", document);
        assertEquals(201, r.status(), r.body());
        return r.json().get("version").asInt();
    }

    JsonNode run(Map<String, Object> request) throws InterruptedException {
        TestServer.Reply accepted = server.postJson("/v1/regressions", request);
        assertEquals(202, accepted.status(), accepted.body());
        assertEquals("/v1/regressions/" + accepted.json().get("id").asText(),
                accepted.headers().firstValue("Location").orElse(""));
        return await(accepted.json().get("id").asText());
    }

    JsonNode await(String id) throws InterruptedException {
        return server.awaitRegression(id);
    }

    static Map<String, JsonNode> unitsById(JsonNode result) {
        Map<String, JsonNode> units = new HashMap<>();
        result.get("units").forEach(u -> units.put(u.get("unitId").asText(), u));
        return units;
    }

    /** χ²/dof under v1 from fleet.json's numpy reference (χ² and rows − 4). */
    double referenceChi2PerDof(String unitId) {
        for (JsonNode u : fleet.get("units")) {
            if (u.get("unitId").asText().equals(unitId)) {
                return u.get("referenceChiSquare").asDouble() / u.get("referenceDegreesOfFreedom").asDouble();
            }
        }
        throw new AssertionError("no unit " + unitId + " in fleet.json");
    }

    @Test
    void v1_against_v2_fails_on_the_units_whose_fit_the_readme_table_shows_worse() throws Exception {
        Map<String, DemoVersions.TableRow> table = DemoVersions.chi2Table();
        JsonNode run = run(Map.of("family", FAMILY, "baseline", 1, "candidate", 2, "traces", LATEST,
                "tolerances", Map.of("maxChi2PerDofIncrease", CHI2_TOLERANCE)));
        assertEquals("succeeded", run.get("state").asText(), run.toString());
        assertEquals(20, run.get("progress").get("done").asInt());
        assertEquals(20, run.get("progress").get("total").asInt());
        assertEquals(Boolean.FALSE, run.get("pass").asBoolean());
        JsonNode result = run.get("result");
        assertTrue(result.get("complete").asBoolean());
        assertEquals(20, result.get("tracesDone").asInt());

        Map<String, JsonNode> units = unitsById(result);
        assertEquals(table.keySet(), units.keySet());
        for (DemoVersions.TableRow row : table.values()) {
            JsonNode unit = units.get(row.unitId());
            assertEquals(referenceChi2PerDof(row.unitId()), unit.get("baselineChi2PerDof").asDouble(),
                    REFERENCE_TOLERANCE * referenceChi2PerDof(row.unitId()), row.unitId() + " v1");
            assertEquals(row.v1(), unit.get("baselineChi2PerDof").asDouble(), DemoVersions.TABLE_ROUNDING,
                    row.unitId() + " v1 (table)");
            assertEquals(row.v2(), unit.get("candidateChi2PerDof").asDouble(), DemoVersions.TABLE_ROUNDING,
                    row.unitId() + " v2");
            assertEquals(unit.get("candidateChi2PerDof").asDouble() - unit.get("baselineChi2PerDof").asDouble(),
                    unit.get("deltaChi2PerDof").asDouble(), 1e-12, row.unitId() + " delta");
            assertEquals("worse", unit.get("change").asText(), row.unitId());
            JsonNode trace = unit.get("traces").get(0);
            assertEquals(1, trace.get("storedVersion").asInt());
            assertEquals(List.of("return_air", "supply_air"), outputs(trace.get("channels")));
            assertTrue(trace.get("x0").get("comparable").asBoolean());
            assertEquals(4, trace.get("x0").get("states").size());
        }

        Set<String> expectedWorse = new TreeSet<>();
        table.values().stream().filter(r -> r.delta() > CHI2_TOLERANCE).forEach(r -> expectedWorse.add(r.unitId()));
        assertEquals(11, expectedWorse.size(), "the README table's units with chi2/dof up by more than 1");
        Set<String> reportedWorse = new TreeSet<>();
        result.get("worseBeyondTolerance").forEach(f -> reportedWorse.add(f.get("unitId").asText()));
        assertEquals(expectedWorse, reportedWorse);

        JsonNode summary = result.get("summary");
        assertEquals(20, summary.get("compared").asInt());
        assertEquals(0, summary.get("better").asInt());
        assertEquals(20, summary.get("worse").asInt());
        assertEquals(11, summary.get("worseBeyondTolerance").asInt());
        double[] deltas = table.values().stream().mapToDouble(DemoVersions.TableRow::delta).sorted().toArray();
        // Hyndman-Fan definition 7 on the table's 20 deltas: median = mean of the 10th and 11th,
        // p95 = x(19) + 0.05 (x(20) - x(19)); each delta is off by at most two roundings.
        assertEquals((deltas[9] + deltas[10]) / 2, summary.get("medianDeltaChi2PerDof").asDouble(),
                2 * DemoVersions.TABLE_ROUNDING);
        assertEquals(deltas[18] + 0.05 * (deltas[19] - deltas[18]), summary.get("p95DeltaChi2PerDof").asDouble(),
                2 * DemoVersions.TABLE_ROUNDING);

        JsonNode verdict = result.get("verdict");
        assertFalse(verdict.get("pass").asBoolean());
        assertEquals("worse-share", verdict.get("rule").asText());
        assertEquals("11 of 20 compared units are worse beyond tolerance (share 0.5500 > maxWorseShare 0.0)",
                verdict.get("detail").asText());
    }

    @Test
    void v1_against_a_republished_copy_passes_with_every_difference_exactly_zero() throws Exception {
        JsonNode run = run(Map.of("family", FAMILY, "baseline", 1, "candidate", copyOfV1, "traces", LATEST,
                "tolerances", Map.of("maxChi2PerDofIncrease", 0.0, "maxX0ShiftSe", 0.0)));
        assertEquals("succeeded", run.get("state").asText(), run.toString());
        assertEquals(20, run.get("progress").get("done").asInt());
        JsonNode result = run.get("result");
        for (JsonNode unit : result.get("units")) {
            String id = unit.get("unitId").asText();
            assertEquals(0.0, unit.get("deltaChi2PerDof").asDouble(), 0.0, id);
            assertEquals("unchanged", unit.get("change").asText(), id);
            assertEquals(0.0, unit.get("maxAbsX0ShiftSe").asDouble(), 0.0, id);
            assertEquals(referenceChi2PerDof(id), unit.get("baselineChi2PerDof").asDouble(),
                    REFERENCE_TOLERANCE * referenceChi2PerDof(id), id);
            JsonNode trace = unit.get("traces").get(0);
            for (JsonNode channel : trace.get("channels")) {
                assertEquals(0.0, channel.get("deltaRms").asDouble(), 0.0, id + " " + channel);
            }
            for (JsonNode state : trace.get("x0").get("states")) {
                assertEquals(0.0, state.get("shiftSe").asDouble(), 0.0, id + " " + state);
            }
            assertEquals(0, trace.get("flagsAdded").size());
        }
        JsonNode summary = result.get("summary");
        assertEquals(20, summary.get("unchanged").asInt());
        assertEquals(0.0, summary.get("medianDeltaChi2PerDof").asDouble(), 0.0);
        assertEquals(0, result.get("worseBeyondTolerance").size());
        assertTrue(result.get("verdict").get("pass").asBoolean());
        assertEquals("worse-share", result.get("verdict").get("rule").asText());
    }

    @Test
    void renamed_states_fit_the_same_but_their_x0_is_reported_not_comparable() throws Exception {
        JsonNode result = run(Map.of("family", FAMILY, "baseline", 1, "candidate", statesRenamed,
                "traces", Map.of("units", List.of("RCX-85159", "RCX-31956")))).get("result");
        assertFalse(result.get("statesComparable").asBoolean());
        assertTrue(result.get("statesNote").asText().contains("cargo_centre"), result.get("statesNote").asText());
        assertEquals(2, result.get("units").size());
        for (JsonNode unit : result.get("units")) {
            assertEquals(0.0, unit.get("deltaChi2PerDof").asDouble(), 0.0);
            assertFalse(unit.has("maxAbsX0ShiftSe"));
            JsonNode x0 = unit.get("traces").get(0).get("x0");
            assertFalse(x0.get("comparable").asBoolean());
            assertFalse(x0.has("states"));
        }
        assertTrue(result.get("verdict").get("pass").asBoolean());
    }

    @Test
    void a_version_listing_the_outputs_in_another_order_is_matched_by_channel_name() throws Exception {
        JsonNode result = run(Map.of("family", FAMILY, "baseline", 1, "candidate", outputsSwapped,
                "traces", Map.of("units", List.of("RCX-68003", "RCX-33914")))).get("result");
        assertEquals(List.of("supply_air", "return_air"), strings(result.get("candidate").get("outputs")));
        for (JsonNode unit : result.get("units")) {
            assertEquals(0.0, unit.get("deltaChi2PerDof").asDouble(), REORDERED_TOLERANCE);
            for (JsonNode channel : unit.get("traces").get(0).get("channels")) {
                assertEquals(0.0, channel.get("deltaRms").asDouble(), REORDERED_TOLERANCE, channel.toString());
            }
        }
    }

    @Test
    void latest_per_unit_and_a_unit_list_select_exactly_those_traces() throws Exception {
        // A second trace for one unit, posted now with the demo's recording start: the same recording
        // time, written later, so the latest per unit is that one.
        String unit = "RCX-85159";
        String demoCsv = java.nio.file.Files.readString(DemoVersions.DEMO.resolve("traces/" + unit + ".csv"));
        byte[] csv = ("time since " + backstate.cli.DemoLoader.DEMO_START + demoCsv.substring("time".length()))
                .getBytes(java.nio.charset.StandardCharsets.UTF_8);
        TestServer.Reply second = server.post("/v1/units/" + unit + "/traces?model=" + FAMILY + "&version=1",
                "text/csv", csv);
        assertEquals(202, second.status(), second.body());
        String secondTrace = second.json().get("traceId").asText();

        JsonNode latest = run(Map.of("family", FAMILY, "baseline", 1, "candidate", 2,
                "traces", Map.of("units", List.of(unit, "RCX-24000"), "latestPerUnit", 1)));
        assertEquals(2, latest.get("request").get("traceCount").asInt());
        JsonNode units = latest.get("result").get("units");
        assertEquals(List.of("RCX-24000", unit), List.of(units.get(0).get("unitId").asText(),
                units.get(1).get("unitId").asText()));
        assertEquals(secondTrace, units.get(1).get("traces").get(0).get("traceId").asText());

        JsonNode all = run(Map.of("family", FAMILY, "baseline", 1, "candidate", 2,
                "traces", Map.of("units", List.of(unit))));
        JsonNode both = all.get("result").get("units").get(0);
        assertEquals(2, both.get("traces").size());
        // The same samples twice: the pooled χ²/dof is that of one copy.
        assertEquals(both.get("traces").get(0).get("deltaChi2PerDof").asDouble(),
                both.get("deltaChi2PerDof").asDouble(), 1e-12);
    }

    @Test
    void runs_are_listed_newest_first_by_family_across_pages() throws Exception {
        List<String> started = new ArrayList<>();
        for (int i = 0; i < 3; i++) {
            TestServer.Reply r = server.postJson("/v1/regressions", Map.of("family", FAMILY, "baseline", 1,
                    "candidate", copyOfV1, "traces", Map.of("units", List.of("RCX-85159"))));
            started.add(r.json().get("id").asText());
        }
        for (String id : started) {
            await(id);
        }
        Set<String> seen = new HashSet<>();
        String cursor = null;
        int pages = 0;
        do {
            JsonNode page = server.get("/v1/regressions?family=" + FAMILY + "&limit=2"
                    + (cursor == null ? "" : "&cursor=" + cursor)).json();
            for (JsonNode item : page.get("items")) {
                assertTrue(seen.add(item.get("id").asText()), "listed twice: " + item);
                assertEquals(FAMILY, item.get("family").asText());
            }
            cursor = page.path("nextCursor").isTextual() ? page.get("nextCursor").asText() : null;
            pages++;
        } while (cursor != null && pages < 100);
        assertTrue(seen.containsAll(started), seen + " should hold " + started);
        JsonNode first = server.get("/v1/regressions?limit=1").json().get("items").get(0);
        // As instants: RFC 3339 text with and without a fraction ("…:00Z", "…:00.5Z") does not sort as time.
        assertTrue(!java.time.Instant.parse(first.get("createdAt").asText()).isBefore(java.time.Instant.parse(
                server.get("/v1/regressions/" + started.get(0)).json().get("createdAt").asText())));
        assertEquals(0, server.get("/v1/regressions?family=no-such-family").json().get("items").size());
    }

    @Test
    void a_retired_candidate_may_be_compared() throws Exception {
        int retired = publish(DemoVersions.v1(server.mapper));
        assertEquals(200, server.post("/v1/models/" + FAMILY + "/versions/" + retired + "/retire", null,
                new byte[0]).status());
        JsonNode run = run(Map.of("family", FAMILY, "baseline", 1, "candidate", retired,
                "traces", Map.of("units", List.of("RCX-85159"))));
        assertEquals("retired", run.get("result").get("candidate").get("status").asText());
        assertTrue(run.get("pass").asBoolean());
    }

    private static List<String> outputs(JsonNode channels) {
        List<String> names = new ArrayList<>();
        channels.forEach(c -> names.add(c.get("output").asText()));
        return names;
    }

    private static List<String> strings(JsonNode array) {
        List<String> out = new ArrayList<>();
        array.forEach(n -> out.add(n.asText()));
        return out;
    }
}
