package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Runs the README's "API by example" block with real curl against a real server, command by
 * command, substituting the job and estimate IDs the earlier commands produced. Every command
 * must exit 0 and, through curl's --fail-with-body, answer below 400.
 */
class ReadmeExamplesTest {
    static final Path REPO = DocExamples.REPO;

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
                String out = DocExamples.run(line, server.base());
                assertFalse(out.contains("\"status\":5"), line + "\n" + out);
                if (out.contains("\"jobId\"") && jobId == null) {
                    jobId = server.mapper.readTree(out).get("jobId").asText();
                }
            }
        }
    }

    /** The commands of the first bash block after "## API by example" in a page. */
    static List<String> curlCommands(String page) {
        return DocExamples.bashBlocks(page.substring(page.indexOf("## API by example"))).get(0);
    }
}
