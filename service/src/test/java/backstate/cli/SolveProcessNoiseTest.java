package backstate.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;

/**
 * {@code backstate solve --formulation process_noise} on the door-openings demo
 * (test-data/demo/door-openings): the estimate says which formulation produced it and carries the
 * innovations and the window-end state; a model without process noise exits 2 naming the field.
 */
class SolveProcessNoiseTest {
    static final Path DOOR = Path.of(System.getProperty("backstate.testData", "../test-data"))
            .resolve("demo").resolve("door-openings");

    @Test
    void solve_with_process_noise_names_its_formulation_and_reports_innovations() throws Exception {
        CommandRun run = CommandRun.of(SolveCommand::run, "--model", DOOR.resolve("reefer-40-noise.v1.json").toString(),
                "--trace", DOOR.resolve("RCX-61530.csv").toString(), "--formulation", "process_noise");
        assertEquals(0, run.exit(), run.err());
        JsonNode estimate = new ObjectMapper().readTree(run.out());
        assertEquals("process_noise", estimate.get("formulation").asText());
        assertEquals(2, estimate.get("innovations").size());
        assertEquals("return_air", estimate.get("innovations").get(0).get("output").asText());
        assertTrue(estimate.get("windowEnd").get("states").size() == 4);
        assertFalse(estimate.get("flags").toString().contains("model_mismatch"), estimate.get("flags").toString());
    }

    @Test
    void process_noise_with_a_model_that_declares_none_exits_2_naming_the_formulation() {
        CommandRun run = CommandRun.of(SolveCommand::run, "--model",
                DOOR.resolveSibling("models").resolve("reefer-40.v1.json").toString(),
                "--trace", DOOR.resolve("RCX-61530.csv").toString(), "--formulation", "process_noise");
        assertEquals(2, run.exit(), run.out());
        assertTrue(run.err().contains("formulation"), run.err());
    }
}
