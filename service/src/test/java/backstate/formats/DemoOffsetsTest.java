package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.estimation.Estimate;
import backstate.estimation.Flag;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Set;
import org.junit.jupiter.api.Test;

/**
 * The README's offsets example: RCX-85159 solved with offsets on both channels. Its air and the
 * two offsets differ only by constants over the window, so the estimate is flagged
 * `offset_confounded` (and `ill_conditioned`), with the standard errors the README quotes.
 */
class DemoOffsetsTest {
    @Test
    void offsets_on_a_steady_demo_unit_are_flagged_confounded() throws Exception {
        Path demo = DemoContinuousFormulationTest.DEMO;
        ModelDocument model = Json.mapper(Limits.DEFAULTS).readValue(
                demo.resolve("models/reefer-40.v1.json").toFile(), ModelDocument.class);
        ParsedTrace parsed;
        try (InputStream in = Files.newInputStream(demo.resolve("traces/RCX-85159.csv"))) {
            parsed = new TraceReader(Limits.DEFAULTS).readCsv(in, model, new TraceOptions(null, true, null, null));
        }
        DocumentSolver.Outcome outcome = DocumentSolver.solve(model, parsed, false, Limits.DEFAULTS);
        Estimate e = ((DocumentSolver.Outcome.Solved) outcome).estimate();
        assertEquals(Set.of(Flag.ILL_CONDITIONED, Flag.OFFSET_CONFOUNDED), e.flags());
        // README figures, rounded as printed there: wall ± 25 °C, offsets ± 52 °C.
        assertEquals(25, e.standardErrors()[0], 0.5);
        assertEquals(52, e.standardErrors()[4], 0.5);
        assertTrue(e.standardErrors()[5] > 50, "supply_air offset SE " + e.standardErrors()[5]);
    }
}
