package backstate.cli;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import backstate.formats.EstimateCaution;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code solve} as the README states it: "It prints the estimate as JSON with the same
 * {@code caution} the API sends (exit 0), or the unobservable directions (exit 3); bad input
 * exits 2." Each exit code with the output that goes with it, and nothing else on the other stream.
 */
class SolveExitCodesTest {
    /**
     * numpy lstsq (test-data/demo/generate_demo.py, the demo fleet's reference values) against our
     * QR on the demo's κ ≈ 1e3 problems: agreement to 1e-9 relative, as in OpenApiContractTest.
     */
    static final double REFERENCE_TOLERANCE = 1e-9;
    static final String UNIT = "RCX-85159";
    /** Two tanks, one probe on the first: the second tank's state never reaches the output. */
    static final String PAIR_MODEL = "{\"timeDomain\":\"continuous\",\"states\":[{\"name\":\"seen\",\"unit\":\"degC\"},"
            + "{\"name\":\"hidden\",\"unit\":\"degC\"}],\"outputs\":[{\"name\":\"probe\",\"unit\":\"degC\",\"noiseSigma\":0.1}],"
            + "\"a\":[[-0.001,0],[0,-0.002]],\"c\":[[1,0]]}";

    final ObjectMapper json = new ObjectMapper();

    @TempDir
    Path dir;

    @Test
    void a_solved_trace_prints_the_estimate_as_json_with_the_api_caution_and_exits_0() throws IOException {
        CommandRun run = CommandRun.of(SolveCommand::run, "--model", SolveCommandTest.MODEL.toString(),
                "--trace", TestServer.TEST_DATA.resolve("demo/traces/" + UNIT + ".csv").toString());

        assertEquals(0, run.exit(), run.err());
        assertEquals("", run.err());
        JsonNode estimate = json.readTree(run.out());
        assertTrue(estimate.isObject(), run.out());
        assertEquals(EstimateCaution.TEXT, estimate.get("caution").asText());
        assertEquals(List.of("wall", "air", "cargo_surface", "cargo_core"), texts(estimate.get("states"), "name"));
        assertEquals("sampled", estimate.get("formulation").asText());
        // The numbers: the demo generator's numpy lstsq solution for this unit (test-data/demo/fleet.json).
        JsonNode reference = demoUnit(UNIT);
        for (String[] pair : new String[][] {{"referenceEstimate", "estimate"}, {"referenceStdErrors", "standardError"}}) {
            double[] expected = json.convertValue(reference.get(pair[0]), double[].class);
            double[] got = texts(estimate.get("states"), pair[1]).stream().mapToDouble(Double::parseDouble).toArray();
            double scale = Arrays.stream(expected).map(Math::abs).max().orElseThrow();
            assertArrayEquals(expected, got, REFERENCE_TOLERANCE * scale, pair[1]);
        }
        double chi2 = reference.get("referenceChiSquare").asDouble();
        assertEquals(chi2, estimate.get("residuals").get("chiSquare").asDouble(), REFERENCE_TOLERANCE * chi2);
        assertEquals(reference.get("referenceDegreesOfFreedom").asInt(), estimate.get("residuals").get("degreesOfFreedom").asInt());
    }

    /** An output with no value is warned of on stderr, as the service warns a gateway; the estimate still goes to stdout. */
    @Test
    void an_output_with_no_value_is_warned_of_on_stderr_and_the_trace_still_solves() throws IOException {
        Path trace = write("dead-supply.csv", "time,return_air,supply_air,cooling_power,ambient\n"
                + "0,2.7,,6.4,27.1\n60,2.6,,6.4,27.1\n120,2.5,,6.4,27.1\n180,2.5,,6.4,27.1\n240,2.4,,6.4,27.1\n");
        CommandRun run = CommandRun.of(SolveCommand::run, "--model", SolveCommandTest.MODEL.toString(), "--trace", trace.toString());
        assertEquals(0, run.exit(), run.err());
        assertEquals("backstate solve: warning: column supply_air: no value in the window: every sample of this output"
                + " is missing, so the estimate rests on the other outputs" + System.lineSeparator(), run.err());
        JsonNode estimate = json.readTree(run.out());
        assertEquals(0, estimate.get("residuals").get("channels").get(1).get("samples").asInt(), run.out());
    }

    /**
     * An offset the trace cannot tell from the states (one state seen through two sensors, the second
     * dead): a prior on the states would not fix it, so the advice is about the offset.
     */
    @Test
    void an_undetermined_offset_is_advised_about_as_an_offset() throws IOException {
        Path model = write("two-sensors.json", "{\"timeDomain\":\"continuous\",\"states\":[{\"name\":\"air\"}],"
                + "\"outputs\":[{\"name\":\"left\",\"noiseSigma\":0.1},{\"name\":\"right\",\"noiseSigma\":0.1}],"
                + "\"a\":[[-0.001]],\"c\":[[1],[1]]}");
        Path trace = write("dead-right.json", "{\"time\":[0,60,120,180],\"outputs\":{\"left\":[5,4.9,4.8,4.75],"
                + "\"right\":[null,null,null,null]}}");

        CommandRun run = CommandRun.of(SolveCommand::run, "--model", model.toString(), "--trace", trace.toString(), "--offsets");

        assertEquals(3, run.exit(), run.out() + run.err());
        String error = json.readTree(run.out()).get("error").asText();
        assertTrue(error.endsWith("(mostly along offset:right); estimate no offsets for this trace (an offset is told"
                + " from the states only when they move in the window, and only on an output with values)"), error);
    }

    @Test
    void an_unobservable_trace_prints_the_directions_and_exits_3() throws IOException {
        Path model = write("pair.json", PAIR_MODEL);
        Path trace = write("pair-trace.json", "{\"time\":[0,60,120,180],\"outputs\":{\"probe\":[5,4.9,4.8,4.75]}}");

        CommandRun run = CommandRun.of(SolveCommand::run, "--model", model.toString(), "--trace", trace.toString());

        assertEquals(3, run.exit(), run.out() + run.err());
        assertEquals("", run.err());
        JsonNode answer = json.readTree(run.out());
        assertEquals(List.of("error", "unobservableDirections"), fieldNames(answer));
        assertEquals("unobservable: the trace does not determine 1 direction of the unknowns (mostly along hidden);"
                + " add a prior, measure another output, or record longer or more often", answer.get("error").asText());
        // Closed form: with C = [1 0] and A diagonal, [C; CA] = [[1, 0], [-0.001, 0]] has the null
        // space span{(0, 1)}: the hidden tank. A direction's sign is arbitrary.
        JsonNode directions = answer.get("unobservableDirections");
        assertEquals(1, directions.size());
        JsonNode components = directions.get(0).get("components");
        assertEquals(List.of("seen", "hidden"), texts(components, "name"));
        assertEquals(List.of("state", "state"), texts(components, "kind"));
        assertEquals(0.0, components.get(0).get("value").asDouble(), 1e-12);
        assertEquals(1.0, Math.abs(components.get(1).get("value").asDouble()), 1e-12);
    }

    /** Three tanks, one probe on the first, A diagonal: the other two are hidden (closed form, as above). */
    @Test
    void two_unobservable_directions_are_each_named_by_their_largest_unknown() throws IOException {
        Path model = write("three.json", "{\"timeDomain\":\"continuous\",\"states\":[{\"name\":\"seen\",\"unit\":\"K\"},"
                + "{\"name\":\"left\",\"unit\":\"K\"},{\"name\":\"right\",\"unit\":\"K\"}],"
                + "\"outputs\":[{\"name\":\"probe\",\"unit\":\"K\",\"noiseSigma\":0.1}],"
                + "\"a\":[[-0.001,0,0],[0,-0.002,0],[0,0,-0.003]],\"c\":[[1,0,0]]}");
        Path trace = write("three-trace.json", "{\"time\":[0,60,120,180],\"outputs\":{\"probe\":[5,4.9,4.8,4.75]}}");

        CommandRun run = CommandRun.of(SolveCommand::run, "--model", model.toString(), "--trace", trace.toString());

        assertEquals(3, run.exit(), run.out() + run.err());
        String error = json.readTree(run.out()).get("error").asText();
        assertTrue(error.equals("unobservable: the trace does not determine 2 directions of the unknowns (one mostly along"
                + " left, one mostly along right); add a prior, measure another output, or record longer or more often")
                || error.equals("unobservable: the trace does not determine 2 directions of the unknowns (one mostly along"
                + " right, one mostly along left); add a prior, measure another output, or record longer or more often"), error);
    }

    @Test
    void bad_input_exits_2_with_one_line_on_stderr_and_nothing_on_stdout() throws IOException {
        String model = SolveCommandTest.MODEL.toString();
        String trace = SolveCommandTest.TRACE.toString();
        Path badCell = write("bad-cell.csv", "time,return_air,supply_air,cooling_power,ambient\n0,warm,1,1,1\n");
        Path unknownColumn = write("unknown-column.csv", "time,return_air,humidity\n0,1,1\n");
        Path notJson = write("model.json", "{\"timeDomain\":");
        Path wrongType = write("wrong-type.json", "{\"timeDomain\": \"continuous\", \"states\": {\"name\": \"wall\"}}");
        Path twoDocuments = write("two.json", "{\"timeDomain\": \"continuous\"} {\"timeDomain\": \"discrete\"}");

        assertRefused("backstate solve: missing --trace FILE", "--model", model);
        assertRefused("backstate solve: got --speed, expected --model FILE --trace FILE [--formulation sampled|continuous|process_noise]"
                + " [--offsets] [--reference-time SECONDS|RFC3339]", "--model", model, "--trace", trace, "--speed", "fast");
        assertRefused("backstate solve: line 2, column return_air: got \"warm\", expected a decimal number or an empty cell"
                + " for a missing sample",
                "--model", model, "--trace", badCell.toString());
        assertTrue(refused("--model", model, "--trace", unknownColumn.toString())
                .startsWith("backstate solve: header[2]: got an unknown column \"humidity\""));
        // A model file that is not JSON (it ends after the first key): one line naming the file and where.
        assertRefused("backstate solve: model: " + notJson + " is not a model document: got malformed JSON"
                + " at line 1, column 15: unexpected end-of-input within/between Object entries", "--model", notJson.toString(),
                "--trace", trace);
        // A field a model does not have, in the API's words.
        Path unknownField = write("unknown-field.json", "{\"timeDomain\": \"continuous\", \"sampleRate\": 2}");
        assertTrue(refused("--model", unknownField.toString(), "--trace", trace).startsWith("backstate solve: model.sampleRate: "
                + unknownField + " is not a model document: got an unknown field \"sampleRate\", expected one of ["));
        // A value of the wrong type: its path and what goes there; a second document after the first is refused too.
        assertRefused("backstate solve: model.states: " + wrongType + " is not a model document: got an object, expected an array",
                "--model", wrongType.toString(), "--trace", trace);
        assertRefused("backstate solve: model: " + twoDocuments + " is not a model document: got more JSON after the document,"
                + " expected nothing after it", "--model", twoDocuments.toString(), "--trace", trace);
        // A file that is not there or is a folder: the flag, the path and what is wrong, before anything is read.
        Path absent = dir.resolve("absent.csv");
        assertRefused("backstate solve: --trace " + absent + ": no such file", "--model", model, "--trace", absent.toString());
        assertRefused("backstate solve: --model " + dir + ": got a folder, expected a file", "--model", dir.toString(),
                "--trace", trace);
        // A time is refused in recording time (RFC 3339), as the service does: the demo trace runs 43200 s to 64800 s.
        assertRefused("backstate solve: --reference-time: got 1970-01-01T19:26:40Z, expected a time inside the window"
                + " 1970-01-01T12:00:00Z to 1970-01-01T18:00:00Z", "--model", model, "--trace",
                TestServer.TEST_DATA.resolve("demo/traces/RCX-85159.csv").toString(), "--reference-time", "70000");
        // A formulation the solver does not have is named by its flag, as the user typed it.
        assertRefused("backstate solve: --formulation: got \"magic\", expected \"sampled\", \"continuous\" or \"process_noise\"",
                "--model", model, "--trace", trace, "--formulation", "magic");
    }

    private void assertRefused(String line, String... args) {
        assertEquals(line, refused(args));
    }

    /** Runs solve, requires exit 2 with an empty stdout and one line on stderr, and returns that line. */
    private static String refused(String... args) {
        CommandRun run = CommandRun.of(SolveCommand::run, args);
        assertEquals(2, run.exit(), run.out() + run.err());
        assertEquals("", run.out());
        assertTrue(run.err().endsWith(System.lineSeparator()), run.err());
        String line = run.err().substring(0, run.err().length() - System.lineSeparator().length());
        assertTrue(!line.contains("\n"), "one line: " + run.err());
        return line;
    }

    private Path write(String name, String text) throws IOException {
        return Files.writeString(dir.resolve(name), text, StandardCharsets.UTF_8);
    }

    private JsonNode demoUnit(String unitId) throws IOException {
        for (JsonNode unit : json.readTree(TestServer.TEST_DATA.resolve("demo/fleet.json").toFile()).get("units")) {
            if (unit.get("unitId").asText().equals(unitId)) {
                return unit;
            }
        }
        throw new AssertionError(unitId + " is not in the demo fleet");
    }

    private static List<String> texts(JsonNode items, String field) {
        List<String> out = new ArrayList<>();
        items.forEach(item -> out.add(item.get(field).asText()));
        return out;
    }

    private static List<String> fieldNames(JsonNode object) {
        List<String> out = new ArrayList<>();
        object.fieldNames().forEachRemaining(out::add);
        out.sort(null);
        return out;
    }
}
