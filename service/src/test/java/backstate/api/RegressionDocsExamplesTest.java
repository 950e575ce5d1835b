package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.cli.DemoLoader;
import backstate.cli.RegressCommand;
import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Runs docs/regressions.md's examples against a real server with the demo fleet: every curl
 * command with real curl (exit 0, below 400 through --fail-with-body), and the regress command
 * in-process with the documented flags, whose summary must read as the page shows it.
 */
class RegressionDocsExamplesTest {
    static final Path REPO = TestServer.TEST_DATA.toAbsolutePath().getParent();
    static final long COMMAND_TIMEOUT_SECONDS = 30;

    @Test
    void every_example_on_the_regressions_page_runs_as_documented(@TempDir Path dir) throws Exception {
        String page = Files.readString(REPO.resolve("docs/regressions.md"));
        List<List<String>> blocks = bashBlocks(page);
        List<String> curls = blocks.get(0);
        assertTrue(curls.size() >= 5, "found only " + curls.size() + " curl examples");
        try (TestServer server = new TestServer(dir)) {
            new DemoLoader(server.base(), TestServer.TEST_DATA.resolve("demo")).load();
            String runId = null;
            for (String command : curls) {
                if (command.contains("/cancel")) {
                    continue; // the run has finished by now, and cancelling it is a 409 (RegressionCancelTest)
                }
                String out = run(command.replace("REGRESSION_ID", runId == null ? "none" : runId), server.base());
                if (runId == null && command.contains("POST $B/v1/regressions")) {
                    runId = server.mapper.readTree(out).get("id").asText();
                }
            }

            String cli = blocks.get(1).get(0);
            List<String> args = new ArrayList<>(Arrays.asList(cli.substring(cli.indexOf(" regress ") + 9).split(" +")));
            args.set(args.indexOf("--server") + 1, server.base());
            ByteArrayOutputStream out = new ByteArrayOutputStream();
            int exit = RegressCommand.run(args.toArray(String[]::new), new PrintStream(out, true, StandardCharsets.UTF_8),
                    new PrintStream(new ByteArrayOutputStream(), true, StandardCharsets.UTF_8));
            String printed = out.toString(StandardCharsets.UTF_8);
            assertEquals(1, exit, printed);
            for (String line : new String[] {"  20/20 traces", "FAIL (rule worse-share): 11 of 20 compared units",
                    "units: 20 compared, 0 better, 20 worse, 0 unchanged, 0 not compared",
                    "delta chi2/dof per unit: median +16.9884, p95 +69.7822"}) {
                assertTrue(printed.contains(line) && page.contains(line), "page and output should both show: " + line);
            }
        }
    }

    /** Each bash block's commands, comments and "B=" dropped, continuation lines joined. */
    static List<List<String>> bashBlocks(String page) {
        List<List<String>> blocks = new ArrayList<>();
        int at = 0;
        while ((at = page.indexOf("```bash", at)) >= 0) {
            int end = page.indexOf("```", at + 7);
            List<String> commands = new ArrayList<>();
            StringBuilder current = new StringBuilder();
            for (String raw : page.substring(at + 7, end).split("\n")) {
                String line = raw.strip();
                if (line.isEmpty() || line.startsWith("#") || line.startsWith("B=")) {
                    continue;
                }
                current.append(line.endsWith("\\") ? line.substring(0, line.length() - 1) : line).append(' ');
                if (!line.endsWith("\\")) {
                    commands.add(current.toString().strip());
                    current.setLength(0);
                }
            }
            blocks.add(commands);
            at = end + 3;
        }
        return blocks;
    }

    private static String run(String command, String base) throws Exception {
        ProcessBuilder pb = new ProcessBuilder("bash", "-c",
                "set -euo pipefail; curl() { command curl --fail-with-body --max-time 20 \"$@\"; }; " + command)
                .directory(REPO.toFile()).redirectErrorStream(true);
        pb.environment().put("B", base);
        Process p = pb.start();
        // Read before waiting: an answer larger than the pipe's buffer would otherwise block curl.
        // curl's --max-time bounds the read.
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        assertTrue(p.waitFor(COMMAND_TIMEOUT_SECONDS, TimeUnit.SECONDS), "timed out: " + command);
        assertEquals(0, p.exitValue(), command + "\n" + out);
        return out;
    }
}
