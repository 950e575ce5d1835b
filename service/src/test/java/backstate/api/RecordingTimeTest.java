package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;

/**
 * Recording time end to end: one unit's four recordings of the same demo samples on four days,
 * uploaded out of order — the earliest last, as a gateway catching up would — read back in
 * recording order from history, latest, trend and a regression run's selection, with the
 * received-time filters still finding the late upload by when it arrived.
 *
 * <p>Outside source: the cargo_core estimate of every recording is numpy's for these samples
 * (test-data/demo/fleet.json, generate_demo.py): the model is time-invariant, so moving a
 * recording to another day does not move its estimate.
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class RecordingTimeTest {
    static final String UNIT = "LATE-85159";
    static final String DEMO_UNIT = "RCX-85159";
    /** The recordings' days start here; the demo trace's samples run from 43 200 s to 64 800 s of each. */
    static final Instant DAY_0 = Instant.parse("2026-11-28T00:00:00Z");
    /** numpy lstsq vs our QR on the demo's κ ≈ 1e3 problems, as in FleetViewsTest. */
    static final double REFERENCE_TOLERANCE = 1e-9;

    TestServer server;
    /** Trace ID of each day's recording, by day. */
    final String[] traces = new String[4];
    /** Just before the late upload (day 0) was posted. */
    Instant beforeLate;

    @BeforeAll
    void start(@TempDir java.nio.file.Path dir) throws Exception {
        server = new TestServer(dir);
        server.publishDemoModels();
        post(1, csvSince(day(1).toString()));
        post(3, jsonWithTimestamps(day(3)));
        post(2, csvSince("2026-11-30T02:00:00+02:00")); // day 2, its start written with an offset
        beforeLate = Instant.now();
        post(0, csvSince(day(0).toString()));
    }

    @AfterAll
    void stop() {
        server.close();
    }

    @Test
    void history_is_newest_recording_first_whatever_the_upload_order() {
        JsonNode items = get("/v1/units/" + UNIT + "/estimates").get("items");
        assertEquals(List.of(traces[3], traces[2], traces[1], traces[0]), field(items, "traceId"));
        assertEquals(List.of("2026-12-01T12:00:00Z", "2026-11-30T12:00:00Z", "2026-11-29T12:00:00Z", "2026-11-28T12:00:00Z"),
                field(items, "windowStart"));
        assertEquals("2026-11-28T18:00:00Z", items.get(3).get("windowEnd").asText());
        // The late upload was received last of all.
        Instant lateReceived = Instant.parse(items.get(3).get("receivedAt").asText());
        for (int i = 0; i < 3; i++) {
            assertTrue(Instant.parse(items.get(i).get("receivedAt").asText()).isBefore(lateReceived), items.get(i).toString());
        }
    }

    @Test
    void the_latest_estimate_is_of_the_newest_recording_not_the_last_upload() {
        assertEquals(traces[3], get("/v1/units/" + UNIT + "/estimates/latest").get("traceId").asText());
        JsonNode unit = get("/v1/fleet/reefer-40/units?sort=unitId").get("items").get(0);
        assertEquals(List.of(UNIT, "2026-12-01T12:00:00Z"), List.of(unit.get("unitId").asText(),
                unit.get("windowStart").asText()));
    }

    @Test
    void the_late_upload_lands_first_in_the_trend_with_numpys_estimate_everywhere() throws IOException {
        JsonNode points = get("/v1/units/" + UNIT + "/trend?state=cargo_core&model=reefer-40").get("points");
        assertEquals(List.of("2026-11-28T12:00:00Z", "2026-11-29T12:00:00Z", "2026-11-30T12:00:00Z", "2026-12-01T12:00:00Z"),
                field(points, "windowStart"));
        double reference = demoUnit().get("referenceEstimate").get(3).asDouble();
        for (JsonNode p : points) {
            assertEquals(reference, p.get("estimate").asDouble(), REFERENCE_TOLERANCE * reference, p.toString());
        }
        JsonNode newestTwo = get("/v1/units/" + UNIT + "/trend?state=cargo_core&limit=2").get("points");
        assertEquals(List.of("2026-11-30T12:00:00Z", "2026-12-01T12:00:00Z"), field(newestTwo, "windowStart"));
    }

    @Test
    void recording_time_filters_by_window_start_and_received_time_by_arrival() {
        String history = "/v1/units/" + UNIT + "/estimates?from=" + day(1) + "&to=" + day(3);
        assertEquals(List.of(traces[2], traces[1]), field(get(history).get("items"), "traceId"));
        assertEquals(List.of(traces[0]), field(get("/v1/units/" + UNIT + "/estimates?receivedFrom=" + beforeLate)
                .get("items"), "traceId"));
        assertEquals(List.of(traces[3], traces[2], traces[1]), field(get("/v1/units/" + UNIT + "/estimates?receivedTo="
                + beforeLate).get("items"), "traceId"));
        assertEquals(List.of("2026-11-28T12:00:00Z"), field(get("/v1/units/" + UNIT
                + "/trend?state=cargo_core&receivedFrom=" + beforeLate).get("points"), "windowStart"));
        JsonNode summary = get("/v1/fleet/reefer-40/summary?version=1&from=" + day(0) + "&to=" + day(1));
        assertEquals(1, summary.get("versions").get(0).get("estimates").asInt());
    }

    @Test
    void received_filters_compare_with_the_millisecond_answered() {
        // receivedAt is answered to the millisecond; a bound half a millisecond after it is after it.
        JsonNode late = get("/v1/units/" + UNIT + "/estimates?from=" + day(0) + "&to=" + day(1)).get("items").get(0);
        Instant received = Instant.parse(late.get("receivedAt").asText());
        assertEquals(0, received.getNano() % 1_000_000, "answered in whole milliseconds");
        Instant halfAfter = received.plusNanos(500_000);
        String history = "/v1/units/" + UNIT + "/estimates?from=" + day(0) + "&to=" + day(1);
        assertEquals(List.of(traces[0]), field(get(history + "&receivedFrom=" + received).get("items"), "traceId"));
        assertEquals(List.of(), field(get(history + "&receivedFrom=" + halfAfter).get("items"), "traceId"));
        assertEquals(List.of(), field(get(history + "&receivedTo=" + received).get("items"), "traceId"));
        assertEquals(List.of(traces[0]), field(get(history + "&receivedTo=" + halfAfter).get("items"), "traceId"));
        String summary = "/v1/fleet/reefer-40/summary?version=1&from=" + day(0) + "&to=" + day(1);
        assertEquals(1, get(summary + "&receivedTo=" + halfAfter).get("versions").get(0).get("estimates").asInt());
        assertEquals(0, get(summary + "&receivedFrom=" + halfAfter).get("versions").get(0).get("estimates").asInt());
    }

    @Test
    void filters_reach_every_year_a_trace_may_hold_and_read_times_as_traces_do() throws Exception {
        // A recording dated 1950 (a trace may hold 1700 to 2199) is found by a filter around it.
        String csv = new String(demoCsv(), StandardCharsets.UTF_8);
        TestServer.Reply old = server.post("/v1/units/OLD-1/traces?model=reefer-40&version=1", "text/csv",
                ("time since 1950-06-01T00:00:00Z" + csv.substring("time".length())).getBytes(StandardCharsets.UTF_8));
        assertEquals(202, old.status(), old.body());
        assertEquals("succeeded", server.awaitJob(old.json().get("jobId").asText()).get("state").asText());
        assertEquals(List.of("1950-06-01T12:00:00Z"), field(get("/v1/units/OLD-1/estimates?from=1950-01-01T00:00:00Z"
                + "&to=1951-01-01T00:00:00Z").get("items"), "windowStart"));
        assertEquals(List.of("1950-06-01T12:00:00Z"), field(get("/v1/units/OLD-1/estimates?from=1950-06-01T14:00:00%2B02:00")
                .get("items"), "windowStart"));
        // Before 1700, a leap second, no offset: refused as they are in a trace.
        for (String bad : new String[] {"1699-12-31T23:59:59Z", "1990-12-31T23:59:60Z", "2026-12-01T00:00:00"}) {
            TestServer.Reply r = server.get("/v1/units/OLD-1/estimates?from=" + bad);
            assertEquals(400, r.status(), bad + ": " + r.body());
            assertEquals("from", r.json().get("errors").get(0).get("field").asText(), r.body());
        }
    }

    @Test
    void a_regression_selects_and_runs_by_recording_time() throws Exception {
        JsonNode latest = run(Map.of("units", List.of(UNIT), "latestPerUnit", 1));
        assertEquals(List.of(traces[3]), comparedTraces(latest, "traceId"));
        assertEquals(List.of("2026-12-01T12:00:00Z"), comparedTraces(latest, "windowStart"));
        JsonNode earliest = run(Map.of("units", List.of(UNIT), "to", day(1).toString()));
        assertEquals(List.of(traces[0]), comparedTraces(earliest, "traceId"));
        JsonNode arrivedLast = run(Map.of("units", List.of(UNIT), "receivedFrom", beforeLate.toString()));
        assertEquals(List.of(traces[0]), comparedTraces(arrivedLast, "traceId"));
        JsonNode all = run(Map.of("units", List.of(UNIT)));
        assertEquals(List.of(traces[0], traces[1], traces[2], traces[3]), comparedTraces(all, "traceId"));
    }

    // ---- helpers

    private static Instant day(int k) {
        return DAY_0.plus(Duration.ofDays(k));
    }

    private void post(int day, TestServer.Reply reply) throws InterruptedException {
        assertEquals(202, reply.status(), reply.body());
        JsonNode job = server.awaitJob(reply.json().get("jobId").asText());
        assertEquals("succeeded", job.get("state").asText(), job.toString());
        traces[day] = reply.json().get("traceId").asText();
    }

    /** The demo CSV with its seconds counted from {@code start}. */
    private TestServer.Reply csvSince(String start) throws IOException {
        String csv = new String(demoCsv(), StandardCharsets.UTF_8);
        return server.post(tracesPath(), "text/csv",
                ("time since " + start + csv.substring("time".length())).getBytes(StandardCharsets.UTF_8));
    }

    /** The demo CSV as a JSON trace whose times are RFC 3339, counted from {@code start}. */
    private TestServer.Reply jsonWithTimestamps(Instant start) throws IOException {
        String[] lines = new String(demoCsv(), StandardCharsets.UTF_8).split("\r?\n");
        String[] header = lines[0].split(",");
        List<String> time = new ArrayList<>();
        List<List<String>> columns = new ArrayList<>();
        for (int j = 1; j < header.length; j++) {
            columns.add(new ArrayList<>());
        }
        for (int k = 1; k < lines.length; k++) {
            String[] cells = lines[k].split(",", -1);
            time.add("\"" + start.plusSeconds(Long.parseLong(cells[0])) + "\"");
            for (int j = 1; j < header.length; j++) {
                columns.get(j - 1).add(cells[j].isEmpty() ? "null" : cells[j]);
            }
        }
        StringBuilder outputs = new StringBuilder();
        StringBuilder inputs = new StringBuilder();
        for (int j = 1; j < header.length; j++) {
            boolean input = header[j].equals("cooling_power") || header[j].equals("ambient");
            StringBuilder group = input ? inputs : outputs;
            group.append(group.length() == 0 ? "" : ",").append('"').append(header[j]).append("\":[")
                    .append(String.join(",", columns.get(j - 1))).append(']');
        }
        String body = "{\"time\":[" + String.join(",", time) + "],\"outputs\":{" + outputs + "},\"inputs\":{" + inputs + "}}";
        return server.post(tracesPath(), "application/json", body.getBytes(StandardCharsets.UTF_8));
    }

    private static String tracesPath() {
        return "/v1/units/" + UNIT + "/traces?model=reefer-40&version=1";
    }

    private byte[] demoCsv() throws IOException {
        return java.nio.file.Files.readAllBytes(TestServer.TEST_DATA.resolve("demo").resolve(demoUnit().get("trace").asText()));
    }

    private JsonNode demoUnit() throws IOException {
        for (JsonNode u : server.mapper.readTree(TestServer.TEST_DATA.resolve("demo/fleet.json").toFile()).get("units")) {
            if (u.get("unitId").asText().equals(DEMO_UNIT)) {
                return u;
            }
        }
        throw new AssertionError("no demo unit " + DEMO_UNIT);
    }

    /** Runs v1 against v2 over the selection and waits for the result. */
    private JsonNode run(Map<String, Object> selection) throws InterruptedException {
        TestServer.Reply created = server.postJson("/v1/regressions", Map.of("family", "reefer-40", "baseline", 1,
                "candidate", 2, "traces", selection));
        assertEquals(202, created.status(), created.body());
        String id = created.json().get("id").asText();
        JsonNode job = server.awaitJob(id);
        assertEquals("succeeded", job.get("state").asText(), job.toString());
        return get("/v1/regressions/" + id);
    }

    private static List<String> comparedTraces(JsonNode run, String name) {
        return field(run.get("result").get("units").get(0).get("traces"), name);
    }

    private JsonNode get(String path) {
        TestServer.Reply r = server.get(path);
        assertEquals(200, r.status(), path + ": " + r.body());
        return r.json();
    }

    private static List<String> field(JsonNode array, String name) {
        List<String> out = new ArrayList<>();
        array.forEach(n -> out.add(n.get(name).asText()));
        return out;
    }
}
