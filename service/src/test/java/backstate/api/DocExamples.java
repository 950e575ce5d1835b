package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;

/** Runs the curl examples of the README and docs pages against a real server, so they cannot rot. */
final class DocExamples {
    static final Path REPO = TestServer.TEST_DATA.toAbsolutePath().getParent();
    static final long COMMAND_TIMEOUT_SECONDS = 30;

    private DocExamples() {
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

    /**
     * Runs one command with bash in the repository root, $B set to the server and curl made to fail
     * on any answer of 400 or more; asserts exit 0 and returns the output.
     */
    static String run(String command, String base) throws Exception {
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
