package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;

import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * An estimate job solves the stored row, not the post's parse: the stored form is exact, so the
 * estimate document from the decoded row equals the one from the parse character for character,
 * for every demo trace (CSV and JSON bodies).
 */
class StoredTraceEstimateTest {
    static final Path DEMO = Path.of(System.getProperty("backstate.testData", "../test-data")).resolve("demo");
    final ObjectMapper mapper = Json.mapper(Limits.DEFAULTS);
    final TraceCodec codec = new TraceCodec(mapper);

    static Stream<Path> demoTraces() throws Exception {
        return Files.list(DEMO.resolve("traces")).sorted();
    }

    @ParameterizedTest
    @MethodSource("demoTraces")
    void the_estimate_from_the_stored_row_equals_the_one_from_the_parse(Path file) throws Exception {
        ModelDocument model = mapper.readValue(DEMO.resolve("models/reefer-40.v1.json").toFile(), ModelDocument.class);
        ParsedTrace parsed;
        try (InputStream in = Files.newInputStream(file)) {
            TraceReader reader = new TraceReader(Limits.DEFAULTS);
            parsed = file.toString().endsWith(".csv") ? reader.readCsv(in, model, TraceOptions.NONE) : reader.readJson(in, model);
        }
        String fromParse = published(DocumentSolver.solve(model, parsed, false, Limits.DEFAULTS));
        String stored = published(DocumentSolver.solve(model, codec.decode(codec.encode(parsed)), false, Limits.DEFAULTS));
        assertEquals(stored, fromParse);
    }


    private String published(DocumentSolver.Outcome outcome) throws Exception {
        return mapper.writeValueAsString(assertInstanceOf(DocumentSolver.Outcome.Solved.class, outcome).document());
    }
}
