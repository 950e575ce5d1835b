package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.cli.DemoLoader;
import backstate.cli.CompareVersionsCommand;
import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Runs docs/regressions.md's examples against a real server with the demo fleet: every curl
 * command with real curl (exit 0, below 400 through --fail-with-body), and the compare-versions command
 * in-process with the documented flags, whose summary must read as the page shows it.
 */
class RegressionDocsExamplesTest {
    static final Path REPO = DocExamples.REPO;

    @Test
    void every_example_on_the_regressions_page_runs_as_documented(@TempDir Path dir) throws Exception {
        String page = Files.readString(REPO.resolve("docs/regressions.md"));
        List<List<String>> blocks = DocExamples.bashBlocks(page);
        List<String> curls = blocks.get(0);
        assertTrue(curls.size() >= 5, "found only " + curls.size() + " curl examples");
        try (TestServer server = new TestServer(dir)) {
            new DemoLoader(server.base()).load();
            String runId = null;
            for (String command : curls) {
                if (command.contains("/cancel")) {
                    continue; // the run has finished by now, and cancelling it is a 409 (RegressionCancelTest)
                }
                String out = DocExamples.run(command.replace("REGRESSION_ID", runId == null ? "none" : runId), server.base());
                if (runId == null && command.contains("POST $B/v1/regressions")) {
                    runId = server.mapper.readTree(out).get("id").asText();
                }
            }

            String cli = blocks.get(1).get(0);
            String name = " " + CompareVersionsCommand.NAME + " ";
            List<String> args = new ArrayList<>(Arrays.asList(cli.substring(cli.indexOf(name) + name.length()).split(" +")));
            args.set(args.indexOf("--server") + 1, server.base());
            ByteArrayOutputStream out = new ByteArrayOutputStream();
            int exit = CompareVersionsCommand.run(args.toArray(String[]::new), new PrintStream(out, true, StandardCharsets.UTF_8),
                    new PrintStream(new ByteArrayOutputStream(), true, StandardCharsets.UTF_8));
            String printed = out.toString(StandardCharsets.UTF_8);
            assertEquals(1, exit, printed);
            for (String line : new String[] {"  20/20 traces", "FAIL (rule worse-share): 11 of 20 compared units",
                    "units: 20 compared, 0 better, 20 worse, 0 unchanged, 0 not compared",
                    "delta χ²/dof per unit: median +16.9884, p95 +69.7822"}) {
                assertTrue(printed.contains(line) && page.contains(line), "page and output should both show: " + line);
            }
        }
    }
}
