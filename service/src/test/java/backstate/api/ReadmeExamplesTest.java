package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Runs the README's "API by example" block with real curl against a real server, command by
 * command, substituting the job and estimate IDs the earlier commands produced. Every command
 * must exit 0 and, through curl's --fail-with-body, answer below 400.
 */
class ReadmeExamplesTest {
    static final Path REPO = TestServer.TEST_DATA.toAbsolutePath().getParent();
    static final long COMMAND_TIMEOUT_SECONDS = 30;

    @Test
    void every_curl_example_in_the_readme_answers_successfully(@TempDir Path dir) throws Exception {
        List<String> commands = curlCommands(Files.readString(REPO.resolve("README.md")));
        assertTrue(commands.size() >= 15, "found only " + commands.size() + " examples");
        try (TestServer server = new TestServer(dir)) {
            String jobId = null;
            String estimateId = null;
            for (String command : commands) {
                if (command.contains("estimates") && estimateId == null) {
                    JsonNode job = server.awaitJob(jobId);
                    assertEquals("succeeded", job.get("state").asText(), job.toString());
                    estimateId = job.get("estimateId").asText();
                }
                String line = command.replace("JOB_ID", jobId == null ? "none" : jobId)
                        .replace("ESTIMATE_ID", estimateId == null ? "none" : estimateId);
                if (line.contains("/cancel")) {
                    continue; // the job has finished by now; cancelling it is a 409, shown in the OpenAPI tests
                }
                String out = run(line, server.base());
                if (out.contains("\"jobId\"") && jobId == null) {
                    jobId = server.mapper.readTree(out).get("jobId").asText();
                }
            }
        }
    }

    /** The commands of the README's first bash block after "## API by example", continuation lines joined. */
    static List<String> curlCommands(String readme) {
        String section = readme.substring(readme.indexOf("## API by example"));
        String block = section.substring(section.indexOf("```bash") + 7, section.indexOf("```", section.indexOf("```bash") + 7));
        List<String> commands = new ArrayList<>();
        StringBuilder current = new StringBuilder();
        for (String raw : block.split("\n")) {
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
        return commands;
    }

    private static String run(String command, String base) throws Exception {
        ProcessBuilder pb = new ProcessBuilder("bash", "-c",
                "set -euo pipefail; curl() { command curl --fail-with-body --max-time 20 \"$@\"; }; " + command)
                .directory(REPO.toFile()).redirectErrorStream(true);
        pb.environment().put("B", base);
        Process p = pb.start();
        // Read before waiting: a large answer (the OpenAPI document) would otherwise fill the pipe and block curl.
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        assertTrue(p.waitFor(COMMAND_TIMEOUT_SECONDS, TimeUnit.SECONDS), "timed out: " + command);
        assertEquals(0, p.exitValue(), command + "\n" + out);
        assertFalse(out.contains("\"status\":5"), command + "\n" + out);
        return out;
    }
}
