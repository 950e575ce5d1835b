package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.estimation.Estimate;
import backstate.estimation.Flag;
import backstate.estimation.InnovationStatistics;
import backstate.estimation.ModelException;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;

/**
 * The door-openings demo (test-data/demo/door-openings, invented, generate_door_openings.py): a
 * unit simulated from the reefer-40 model with white heat exchange at the door into the air.
 * The deterministic (sampled) formulation cannot explain the wandering air temperature and flags
 * {@code model_mismatch}; the process-noise formulation with the model version that declares the
 * disturbance fits it: no flag, normalised innovations with mean near 0 and variance near 1
 * (their sampling σ over ~700 values is about 0.04 and 0.05, so ±0.2 is a 4σ band), the true
 * initial state inside every 95 % interval, and wider standard errors than the sampled solve
 * claims (it takes the disturbance for signal).
 */
class DemoProcessNoiseTest {
    static final Path DEMO = Path.of(System.getProperty("backstate.testData", "../test-data"))
            .resolve("demo").resolve("door-openings");
    private static final double INNOVATION_BAND = 0.2;

    @Test
    void sampled_formulation_flags_model_mismatch_on_the_door_openings_unit() throws IOException {
        Estimate sampled = solve(model(), "sampled");
        assertTrue(sampled.flags().contains(Flag.MODEL_MISMATCH), "flags " + sampled.flags());
    }

    @Test
    void process_noise_formulation_fits_the_door_openings_unit_with_honest_intervals() throws IOException {
        Estimate smoothed = solve(model(), "process_noise");
        Estimate sampled = solve(model(), "sampled");
        assertFalse(smoothed.flags().contains(Flag.MODEL_MISMATCH), "flags " + smoothed.flags()
                + ", innovations " + smoothed.innovations() + ", χ² " + smoothed.chiSquare() + " on "
                + smoothed.degreesOfFreedom());
        for (InnovationStatistics s : smoothed.innovations()) {
            assertEquals(0.0, s.mean(), INNOVATION_BAND, "innovation mean " + s);
            assertEquals(1.0, s.variance(), INNOVATION_BAND, "innovation variance " + s);
        }
        JsonNode truth = new ObjectMapper().readTree(DEMO.resolve("truth.json").toFile());
        for (int i = 0; i < 4; i++) {
            double x = truth.get("x0").get(i).asDouble();
            assertTrue(smoothed.intervalLower()[i] <= x && x <= smoothed.intervalUpper()[i], "state " + i + ": "
                    + x + " outside [" + smoothed.intervalLower()[i] + ", " + smoothed.intervalUpper()[i] + "]");
            assertTrue(smoothed.standardErrors()[i] > sampled.standardErrors()[i], "state " + i + " se");
        }
        assertTrue(smoothed.windowEnd() != null && smoothed.series() == null, "window end without a series");
    }

    @Test
    void process_noise_needs_a_model_that_declares_it() {
        ModelDocument plain = read(DEMO.resolveSibling("models").resolve("reefer-40.v1.json"));
        ModelException e = assertThrows(ModelException.class, () -> solve(plain, "process_noise"));
        assertEquals("formulation", e.field());
    }

    static ModelDocument model() {
        return read(DEMO.resolve("reefer-40-noise.v1.json"));
    }

    static ModelDocument read(Path file) {
        try {
            return Json.mapper(Limits.DEFAULTS).readValue(file.toFile(), ModelDocument.class);
        } catch (IOException e) {
            throw new java.io.UncheckedIOException(e);
        }
    }

    static Estimate solve(ModelDocument model, String formulation) throws IOException {
        TraceOptions options = new TraceOptions(formulation, null, null, null);
        ParsedTrace parsed;
        try (InputStream in = Files.newInputStream(DEMO.resolve("RCX-61530.csv"))) {
            parsed = new TraceReader(Limits.DEFAULTS).readCsv(in, model, options);
        }
        DocumentSolver.Outcome outcome = DocumentSolver.solve(model, parsed, false, Limits.DEFAULTS);
        assertTrue(outcome instanceof DocumentSolver.Outcome.Solved, formulation + ": " + outcome);
        return ((DocumentSolver.Outcome.Solved) outcome).estimate();
    }
}
