package backstate.intake;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.estimation.ModelException;
import backstate.estimation.Trace;
import backstate.formats.CheckedModels;
import backstate.formats.InputException;
import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.RecordingTime;
import backstate.formats.TraceCodec;
import backstate.formats.TraceOptions;
import backstate.formats.TraceReader;
import backstate.formats.TraceWarning;
import backstate.reliability.ReeferTraces;
import backstate.store.IdempotencyKeyReusedException;
import backstate.store.NewModelVersion;
import backstate.store.QueueFullException;
import backstate.store.SqliteDatabase;
import backstate.store.Submission;
import backstate.store.TraceRow;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.ByteArrayInputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Clock;
import java.time.Instant;
import java.time.ZoneOffset;
import java.util.List;
import java.util.concurrent.atomic.AtomicInteger;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The intake without HTTP: a post in, a stored trace with its queued job out, or a refusal naming the field. */
class TraceIntakeTest {
    static final Path TEST_DATA = Path.of(System.getProperty("backstate.testData", "../test-data"));
    static final String FAMILY = "reefer-40";
    static final Instant NOW = Instant.parse("2026-03-01T12:00:00Z");
    static final int SAMPLES = 200;

    final ObjectMapper mapper = Json.mapper(Limits.DEFAULTS);
    final AtomicInteger wakes = new AtomicInteger();
    final byte[] csv = new ReeferTraces(TEST_DATA).csv(SAMPLES, 3);
    SqliteDatabase store;
    ModelDocument model;

    @BeforeEach
    void open(@TempDir Path dir) throws Exception {
        store = new SqliteDatabase(dir.resolve("intake.db"), Clock.fixed(NOW, ZoneOffset.UTC));
        String json = Files.readString(ReeferTraces.modelFile(TEST_DATA));
        model = mapper.readValue(json, ModelDocument.class);
        store.models().createFamily(FAMILY, "reefers", NOW);
        store.models().publishVersion(new NewModelVersion(FAMILY, "continuous", 4, 2, 2, json, "{}"), NOW);
    }

    @AfterEach
    void close() {
        store.close();
    }

    TraceIntake intake(int maxQueued) {
        return new TraceIntake(store.traces(), store.models(), new CheckedModels(mapper, Limits.DEFAULTS), Limits.DEFAULTS, mapper,
                Clock.fixed(NOW, ZoneOffset.UTC), maxQueued, wakes::incrementAndGet);
    }

    static TracePost csvPost(String unit, int version, String key, byte[] body) {
        return new TracePost(unit, FAMILY, version, "text/csv; charset=utf-8", key, TracePost.CsvQuery.NONE,
                () -> new ByteArrayInputStream(body));
    }

    /** A body the intake must refuse before reading. */
    static TracePost.Body unread() {
        return () -> {
            throw new AssertionError("the body was opened, expected a refusal before it");
        };
    }

    @Test
    void a_csv_post_stores_exactly_the_parsed_trace_and_queues_its_job() throws Exception {
        Submission s = intake(10).submit(csvPost("RCX-1", 1, null, csv)).submission();
        assertFalse(s.replayed());
        assertEquals(1, store.queue().queuedCount());
        assertEquals(1, wakes.get(), "the workers are woken once per write");
        TraceRow row = store.traces().findTrace(s.traceId()).orElseThrow();
        assertEquals("RCX-1", row.unitId());
        assertEquals(SAMPLES, row.samples());
        // ReeferTraces samples once a minute: the window spans (N - 1) periods.
        assertEquals((SAMPLES - 1) * ReeferTraces.PERIOD_SECONDS, row.windowEnd() - row.windowStart(), 0.0);
        Trace stored = new TraceCodec(mapper).decode(row.payload()).trace();
        Trace parsed = new TraceReader(Limits.DEFAULTS).readCsv(new ByteArrayInputStream(csv), model, TraceOptions.NONE).trace();
        assertEquals(parsed.samples(), stored.samples());
        for (int k = 0; k < parsed.samples(); k += 37) {
            assertEquals(parsed.time(k), stored.time(k), 0.0, "time " + k);
        }
        assertEquals(row.windowStart(), parsed.time(0), 0.0);
    }

    @Test
    void a_window_dated_before_2000_is_taken_with_a_warning_on_time_and_again_on_a_replay() throws Exception {
        TraceIntake intake = intake(10);
        // ReeferTraces' times count from 0: read as seconds since 1970.
        String want = "the window starts at 1970-01-01T00:00:00Z, before 2000: plain-number times are seconds since"
                + " 1970-01-01T00:00:00Z; if these count from the recording's start, declare that start (JSON \"start\","
                + " CSV header \"time since <RFC 3339 time>\")";
        Receipt first = intake.submit(csvPost("RCX-8", 1, "k-8", csv));
        assertEquals(List.of(new TraceWarning("time", want)), first.warnings());
        Receipt replay = intake.submit(csvPost("RCX-8", 1, "k-8", csv));
        assertTrue(replay.submission().replayed());
        assertEquals(first.warnings(), replay.warnings());
        byte[] dated = since("2026-03-01T06:00:00+02:00");
        assertEquals(List.of(), intake.submit(csvPost("RCX-9", 1, null, dated)).warnings());
        assertEquals(2, store.queue().queuedCount(), "both traces stored and queued");
    }

    /**
     * A window ending more than RecordingTime.FUTURE_SLACK (10 min) after the service's clock is
     * taken with a warning; at the slack exactly, without. The trace spans 199 one-minute periods.
     */
    @Test
    void a_window_ending_after_the_services_clock_is_taken_with_a_warning_on_time() throws Exception {
        TraceIntake intake = intake(10);
        Instant endAtSlack = NOW.plus(RecordingTime.FUTURE_SLACK);
        Instant start = endAtSlack.minusSeconds((SAMPLES - 1) * (long) ReeferTraces.PERIOD_SECONDS);
        assertEquals(List.of(), intake.submit(csvPost("RCX-10", 1, null, since(start.toString()))).warnings());
        Receipt late = intake.submit(csvPost("RCX-11", 1, null, since(start.plusSeconds(1).toString())));
        assertEquals(List.of(new TraceWarning("time", "the window ends at 2026-03-01T12:10:01Z, after the service's"
                + " clock (2026-03-01T12:00:00Z): check the sender's clock and the zone of the times; a unit's latest"
                + " estimate is its newest recording, so this one stays the latest until a later recording arrives")),
                late.warnings());
        assertEquals(2, store.queue().queuedCount(), "both traces stored and queued");
    }

    /** The test trace with its times counted from {@code start} (RFC 3339). */
    private byte[] since(String start) {
        return ("time since " + start + new String(csv, StandardCharsets.UTF_8).substring(4)).getBytes(StandardCharsets.UTF_8);
    }

    @Test
    void the_same_key_and_body_replay_the_first_post_and_another_body_is_refused() throws Exception {
        TraceIntake intake = intake(10);
        Submission first = intake.submit(csvPost("RCX-2", 1, "k-1", csv)).submission();
        Submission again = intake.submit(csvPost("RCX-2", 1, "k-1", csv)).submission();
        assertTrue(again.replayed());
        assertEquals(first.jobId(), again.jobId());
        assertEquals(first.traceId(), again.traceId());
        byte[] other = new ReeferTraces(TEST_DATA).csv(SAMPLES, 4);
        assertThrows(IdempotencyKeyReusedException.class, () -> intake.submit(csvPost("RCX-2", 1, "k-1", other)));
        assertEquals(1, store.queue().queuedCount());
    }

    @Test
    void a_missing_or_retired_version_is_refused_before_the_body_is_read() throws Exception {
        TraceRefused missing = assertThrows(TraceRefused.class, () -> intake(10).submit(new TracePost("RCX-3", FAMILY, 9,
                "text/csv", null, TracePost.CsvQuery.NONE, unread())));
        assertEquals(TraceRefused.Reason.UNKNOWN_VERSION, missing.reason());
        assertEquals("version", missing.field());
        assertEquals("model version reefer-40/9 does not exist", missing.getMessage());
        TraceRefused noFamily = assertThrows(TraceRefused.class, () -> intake(10).submit(new TracePost("RCX-3", "reefer-99", 1,
                "text/csv", null, TracePost.CsvQuery.NONE, unread())));
        assertEquals("model", noFamily.field());
        assertEquals("model family reefer-99 does not exist", noFamily.getMessage());

        store.models().retireVersion(FAMILY, 1);
        TraceRefused retired = assertThrows(TraceRefused.class, () -> intake(10).submit(new TracePost("RCX-3", FAMILY, 1,
                "text/csv", null, TracePost.CsvQuery.NONE, unread())));
        assertEquals(TraceRefused.Reason.RETIRED_VERSION, retired.reason());
        assertEquals(0, store.queue().queuedCount());
        assertEquals(0, wakes.get());
    }

    /** The demo CSV with the given output columns (1 return_air, 2 supply_air) blank but for the rows {@code keep}. */
    private byte[] blanked(int[] columns, int... keep) {
        String[] lines = new String(csv, java.nio.charset.StandardCharsets.UTF_8).split("\n");
        assertEquals("time,return_air,supply_air", String.join(",", java.util.Arrays.copyOf(lines[0].split(","), 3)));
        StringBuilder out = new StringBuilder(lines[0]).append('\n');
        for (int i = 1; i < lines.length; i++) {
            String[] cells = lines[i].split(",", -1);
            final int row = i;
            if (java.util.Arrays.stream(keep).noneMatch(k -> k == row)) {
                for (int c : columns) {
                    cells[c] = "";
                }
            }
            out.append(String.join(",", cells)).append('\n');
        }
        return out.toString().getBytes(java.nio.charset.StandardCharsets.UTF_8);
    }

    /** The continuous formulation's trapezoid gives a lone value no weight: said, as a dead output is. */
    @Test
    void an_output_with_one_value_is_warned_of_under_the_continuous_formulation_only() throws Exception {
        byte[] lone = blanked(new int[] {2}, 5);
        TracePost continuous = new TracePost("RCX-10", FAMILY, 1, "text/csv", null,
                new TracePost.CsvQuery("continuous", null, null), () -> new ByteArrayInputStream(lone));
        Receipt warned = intake(10).submit(continuous);
        assertEquals(List.of(new TraceWarning("column supply_air", "one value in the window: the continuous formulation"
                + " weighs a value by the time it covers up to its neighbours, and a lone value has none, so this output"
                + " does not count; the sampled formulation would use it")), outputWarnings(warned));
        assertEquals(List.of(), outputWarnings(intake(10).submit(csvPost("RCX-10", 1, null, lone))), "sampled");
    }

    private static List<TraceWarning> outputWarnings(Receipt receipt) {
        return receipt.warnings().stream().filter(w -> !w.field().equals("time")).toList();
    }

    /** Taken, its job could only fail: there is nothing to estimate from. */
    @Test
    void a_trace_whose_every_output_is_missing_is_refused_and_queues_nothing() {
        byte[] blank = blanked(new int[] {1, 2});
        ModelException e = assertThrows(ModelException.class, () -> intake(10).submit(csvPost("RCX-9", 1, null, blank)));
        assertEquals("body", e.field());
        assertEquals("got no value in any output (every sample of every output is missing), expected at least one value"
                + " to estimate from", e.problem());
        assertEquals(0, store.queue().queuedCount());
    }

    @Test
    void a_body_of_another_media_type_or_with_misplaced_options_is_refused_naming_the_field() {
        TraceRefused plain = assertThrows(TraceRefused.class, () -> intake(10).submit(new TracePost("RCX-4", FAMILY, 1,
                "text/plain", null, TracePost.CsvQuery.NONE, () -> new ByteArrayInputStream(csv))));
        assertEquals(TraceRefused.Reason.UNSUPPORTED_MEDIA_TYPE, plain.reason());
        assertEquals("text/plain", plain.getMessage());

        TraceRefused none = assertThrows(TraceRefused.class, () -> intake(10).submit(new TracePost("RCX-4", FAMILY, 1,
                null, null, TracePost.CsvQuery.NONE, () -> new ByteArrayInputStream(csv))));
        assertEquals("no Content-Type", none.getMessage());

        InputException json = assertThrows(InputException.class, () -> intake(10).submit(new TracePost("RCX-4", FAMILY, 1,
                "application/json", null, new TracePost.CsvQuery("discrete", null, null),
                () -> new ByteArrayInputStream(new ReeferTraces(TEST_DATA).json(SAMPLES, 3)))));
        assertEquals("formulation", json.field());

        InputException offsets = assertThrows(InputException.class, () -> intake(10).submit(new TracePost("RCX-4", FAMILY, 1,
                "text/csv", null, new TracePost.CsvQuery(null, "maybe", null), () -> new ByteArrayInputStream(csv))));
        assertEquals("estimateOffsets", offsets.field());
        assertEquals("estimateOffsets: got \"maybe\", expected true or false", offsets.getMessage());
        assertEquals(0, store.queue().queuedCount());
    }

    @Test
    void a_prior_under_a_version_without_sigma_needs_the_traces_sigma_for_every_output() throws Exception {
        com.fasterxml.jackson.databind.node.ObjectNode doc = (com.fasterxml.jackson.databind.node.ObjectNode)
                mapper.readTree(Files.readString(ReeferTraces.modelFile(TEST_DATA)));
        doc.get("outputs").forEach(o -> ((com.fasterxml.jackson.databind.node.ObjectNode) o).remove("noiseSigma"));
        store.models().publishVersion(new NewModelVersion(FAMILY, "continuous", 4, 2, 2, doc.toString(), "{}"), NOW);
        String trace = new String(new ReeferTraces(TEST_DATA).json(SAMPLES, 3), StandardCharsets.UTF_8);
        String prior = "\"options\":{\"prior\":{\"mean\":[0,0,0,0],\"covariance\":[[1,0,0,0],[0,1,0,0],[0,0,1,0],[0,0,0,1]]}}";
        String withPrior = trace.substring(0, trace.lastIndexOf('}')) + "," + prior + "}";
        ModelException refused = assertThrows(ModelException.class, () -> intake(10).submit(jsonPost(2, withPrior)));
        assertEquals("noiseSigma.return_air", refused.field());
        String withSigma = withPrior.substring(0, withPrior.lastIndexOf('}'))
                + ",\"noiseSigma\":{\"return_air\":0.15,\"supply_air\":0.15}}";
        intake(10).submit(jsonPost(2, withSigma));
        assertEquals(1, store.queue().queuedCount());
    }

    private static TracePost jsonPost(int version, String body) {
        return new TracePost("RCX-5", FAMILY, version, "application/json", null, TracePost.CsvQuery.NONE,
                () -> new ByteArrayInputStream(body.getBytes(StandardCharsets.UTF_8)));
    }

    @Test
    void a_json_post_is_stored_like_the_same_trace_in_csv() throws Exception {
        TraceIntake intake = intake(10);
        TraceRow fromCsv = store.traces().findTrace(intake.submit(csvPost("RCX-5", 1, null, csv)).submission().traceId()).orElseThrow();
        TraceRow fromJson = store.traces().findTrace(intake.submit(new TracePost("RCX-5", FAMILY, 1, "application/json", null,
                TracePost.CsvQuery.NONE, () -> new ByteArrayInputStream(new ReeferTraces(TEST_DATA).json(SAMPLES, 3))))
                .submission().traceId()).orElseThrow();
        assertNotEquals(fromCsv.id(), fromJson.id());
        assertEquals(fromCsv.samples(), fromJson.samples());
        assertEquals(fromCsv.windowStart(), fromJson.windowStart(), 0.0);
        assertEquals(fromCsv.windowEnd(), fromJson.windowEnd(), 0.0);
    }

    @Test
    void a_post_past_the_queue_limit_is_refused_and_stores_nothing() throws Exception {
        TraceIntake intake = intake(1);
        intake.submit(csvPost("RCX-6", 1, null, csv));
        assertThrows(QueueFullException.class, () -> intake.submit(csvPost("RCX-7", 1, null, csv)));
        assertEquals(1, store.queue().queuedCount());
    }
}
