package backstate.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import backstate.formats.EstimateCaution;
import backstate.formats.RecordingTime;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The offline {@code solve}: option flags override a JSON trace's {@code options} field by field
 * and keep the rest (the prior above all), and the estimate carries the API's caution. Each flag
 * is checked against the same trace with the merged options written into the file, so the two
 * runs must print the same estimate.
 */
class SolveCommandTest {
    static final Path MODEL = TestServer.TEST_DATA.resolve("demo/models/reefer-40.v1.json");
    static final Path TRACE = TestServer.TEST_DATA.resolve("demo/traces/RCX-31956.json");
    /** Inside RCX-31956's window (54 480 s to 76 079 s). */
    static final double TRACE_REFERENCE = 60_000;
    static final double FLAG_REFERENCE = 70_000;

    final ObjectMapper mapper = new ObjectMapper();

    @TempDir
    Path dir;

    static CommandRun solve(String... args) {
        return CommandRun.of(SolveCommand::run, args);
    }

    /** The demo trace with these options written in, as a file. */
    Path traceWith(Map<String, Object> options) throws Exception {
        ObjectNode trace = (ObjectNode) mapper.readTree(TRACE.toFile());
        trace.set("options", mapper.valueToTree(options));
        Path file = dir.resolve("trace-" + Integer.toHexString(options.hashCode()) + ".json");
        mapper.writeValue(file.toFile(), trace);
        return file;
    }

    /**
     * A prior far from the demo's states (about 0-15 °C) and tight (σ = 0.1 °C): it moves the
     * estimate well beyond its standard errors, so an estimate made without it shows.
     */
    static Map<String, Object> prior() {
        return Map.of("mean", List.of(-5.0, -5.0, -5.0, -5.0),
                "covariance", List.of(List.of(0.01, 0, 0, 0), List.of(0, 0.01, 0, 0), List.of(0, 0, 0.01, 0), List.of(0, 0, 0, 0.01)));
    }

    JsonNode solved(Path trace, String... flags) {
        List<String> args = new ArrayList<>(List.of("--model", MODEL.toString(), "--trace", trace.toString()));
        args.addAll(List.of(flags));
        CommandRun run = solve(args.toArray(String[]::new));
        assertEquals(0, run.exit(), run.err());
        try {
            return mapper.readTree(run.out());
        } catch (java.io.IOException e) {
            throw new AssertionError("not JSON: " + run.out(), e);
        }
    }

    @Test
    void each_flag_overrides_its_own_option_and_keeps_the_prior_and_the_others() throws Exception {
        Path traceOptions = traceWith(Map.of("prior", prior(), "referenceTime", TRACE_REFERENCE));

        JsonNode continuous = solved(traceOptions, "--formulation", "continuous");
        assertEquals(solved(traceWith(Map.of("prior", prior(), "referenceTime", TRACE_REFERENCE, "formulation", "continuous"))),
                continuous);
        assertEquals("continuous", continuous.get("formulation").asText());
        assertEquals(TRACE_REFERENCE, continuous.get("reference").get("time").asDouble());

        JsonNode offsets = solved(traceOptions, "--offsets");
        assertEquals(solved(traceWith(Map.of("prior", prior(), "referenceTime", TRACE_REFERENCE, "estimateOffsets", true))),
                offsets);
        assertEquals(2, offsets.get("offsets").size(), "one offset per output channel");

        JsonNode moved = solved(traceOptions, "--reference-time", Double.toString(FLAG_REFERENCE));
        assertEquals(solved(traceWith(Map.of("prior", prior(), "referenceTime", FLAG_REFERENCE))), moved);
        assertEquals(FLAG_REFERENCE, moved.get("reference").get("time").asDouble());

        // The prior mattered: without it the same flag gives another estimate.
        JsonNode withoutPrior = solved(traceWith(Map.of("referenceTime", TRACE_REFERENCE)), "--formulation", "continuous");
        assertNotEquals(continuous.get("states"), withoutPrior.get("states"));
    }

    @Test
    void the_estimate_carries_the_caution_the_api_sends() throws Exception {
        JsonNode estimate = solved(TestServer.TEST_DATA.resolve("demo/traces/RCX-85159.csv"));
        assertEquals(EstimateCaution.TEXT, estimate.get("caution").asText());
        assertTrue(EstimateCaution.TEXT.startsWith("Estimates support, and never replace, calibrated measurements"));
        assertEquals(4, estimate.get("states").size());
    }

    @Test
    void help_prints_the_usage_and_bad_flags_exit_2_naming_them() {
        CommandRun help = solve("--help");
        assertEquals(0, help.exit());
        assertEquals(SolveCommand.USAGE + System.lineSeparator(), help.out());

        CommandRun misspelt = solve("--model", MODEL.toString(), "--trace", TRACE.toString(), "--formulaton", "continuous");
        assertEquals(SolveCommand.BAD_INPUT, misspelt.exit());
        assertTrue(misspelt.err().startsWith("backstate solve: got --formulaton, expected --model FILE"), misspelt.err());

        CommandRun notANumber = solve("--model", MODEL.toString(), "--trace", TRACE.toString(), "--reference-time", "noon");
        assertEquals(SolveCommand.BAD_INPUT, notANumber.exit());
        assertEquals("backstate solve: --reference-time: got \"noon\", expected seconds on the trace's clock or "
                + RecordingTime.EXAMPLE + System.lineSeparator(), notANumber.err());
    }

    /**
     * The flag's seconds count on the trace's own clock, as the service reads a reference time: from
     * the declared start of a JSON trace (2026-12-01T04:00:00Z = 1 796 097 600 s since 1970, by
     * java.time below), and an RFC 3339 time is taken as it is.
     */
    @Test
    void the_reference_flag_reads_on_the_traces_own_clock_and_takes_rfc_3339() throws Exception {
        ObjectNode trace = (ObjectNode) mapper.readTree(TRACE.toFile());
        trace.put("start", "2026-12-01T06:00:00+02:00");
        Path started = dir.resolve("started.json");
        mapper.writeValue(started.toFile(), trace);
        double start = java.time.Instant.parse("2026-12-01T04:00:00Z").getEpochSecond();
        assertEquals(start + FLAG_REFERENCE, solved(started, "--reference-time", Double.toString(FLAG_REFERENCE))
                .get("reference").get("time").asDouble());
        assertEquals(start + 61_200, solved(started, "--reference-time", "2026-12-01T21:00:00Z")
                .get("reference").get("time").asDouble());

        CommandRun outside = solve("--model", MODEL.toString(), "--trace", started.toString(), "--reference-time", "10");
        assertEquals(SolveCommand.BAD_INPUT, outside.exit());
        assertTrue(outside.err().startsWith("backstate solve: --reference-time: got 2026-12-01T04:00:10Z, expected a time"
                + " inside the window"), outside.err());
    }
}
