package backstate.jobs;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;

import backstate.formats.CheckedModel;
import backstate.formats.DocumentSolver;
import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedTrace;
import backstate.formats.TraceCodec;
import backstate.formats.TraceOptions;
import backstate.formats.TraceReader;
import backstate.reliability.ReeferTraces;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.ByteArrayInputStream;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * A job that takes its trace from the post's memory ({@link FreshTraces}) must publish exactly
 * what a job reading the stored row publishes: the stored form is exact, so the two estimate
 * documents are equal character for character, for every demo trace (CSV and JSON bodies); and so
 * must the solve a long trace's post starts while the trace is written.
 */
class FreshOrStoredTest {
    static final Path DEMO = Path.of(System.getProperty("backstate.testData", "../test-data")).resolve("demo");
    final ObjectMapper mapper = Json.mapper(Limits.DEFAULTS);
    final TraceCodec codec = new TraceCodec(mapper);

    static Stream<Path> demoTraces() throws Exception {
        return Files.list(DEMO.resolve("traces")).sorted();
    }

    @ParameterizedTest
    @MethodSource("demoTraces")
    void the_estimate_from_the_parse_in_hand_equals_the_one_from_the_stored_row(Path file) throws Exception {
        ModelDocument model = mapper.readValue(DEMO.resolve("models/reefer-40.v1.json").toFile(), ModelDocument.class);
        ParsedTrace parsed;
        try (InputStream in = Files.newInputStream(file)) {
            TraceReader reader = new TraceReader(Limits.DEFAULTS);
            parsed = file.toString().endsWith(".csv") ? reader.readCsv(in, model, TraceOptions.NONE) : reader.readJson(in, model);
        }
        String fresh = published(DocumentSolver.solve(model, parsed, false, Limits.DEFAULTS));
        String stored = published(DocumentSolver.solve(model, codec.decode(codec.encode(parsed)), false, Limits.DEFAULTS));
        assertEquals(stored, fresh);
    }

    /** A trace long enough to be solved while its post is written gets the same estimate as its job would compute. */
    @Test
    void a_long_trace_solved_ahead_equals_the_solve_of_its_stored_row() throws Exception {
        ModelDocument model = mapper.readValue(DEMO.resolve("models/reefer-40.v1.json").toFile(), ModelDocument.class);
        CheckedModel checked = CheckedModel.of(model, Limits.DEFAULTS);
        StoredTraceSolver solver = new StoredTraceSolver(null, null, mapper, Limits.DEFAULTS);
        byte[] csv = new ReeferTraces(DEMO.getParent()).csv(StoredTraceSolver.SOLVE_AHEAD_SAMPLES, 7);
        ParsedTrace parsed = new TraceReader(Limits.DEFAULTS).readCsv(new ByteArrayInputStream(csv), model, TraceOptions.NONE);

        Future<DocumentSolver.Outcome> ahead = solver.solveAhead(checked, parsed);
        assertNotNull(ahead, "a trace of " + StoredTraceSolver.SOLVE_AHEAD_SAMPLES + " samples is solved ahead");
        String stored = published(DocumentSolver.solve(model, codec.decode(codec.encode(parsed)), false, Limits.DEFAULTS));
        assertEquals(stored, published(ahead.get(60, TimeUnit.SECONDS)));

        byte[] shorter = new ReeferTraces(DEMO.getParent()).csv(StoredTraceSolver.SOLVE_AHEAD_SAMPLES - 1, 7);
        assertNull(solver.solveAhead(checked, new TraceReader(Limits.DEFAULTS).readCsv(new ByteArrayInputStream(shorter),
                model, TraceOptions.NONE)), "a shorter one waits for its job");
    }

    private String published(DocumentSolver.Outcome outcome) throws Exception {
        return mapper.writeValueAsString(assertInstanceOf(DocumentSolver.Outcome.Solved.class, outcome).document());
    }
}
