package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.cli.DemoLoader;
import com.fasterxml.jackson.databind.JsonNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Runs the README's "API by example" block, in order, against what the README tells a user to
 * start first: a server with the demo fleet loaded by the demo's own loader. Each curl command is
 * sent as the HTTP request it describes (CurlLine; no curl needed), with the job and estimate IDs
 * the earlier commands produced, and must answer 2xx. The one exception is cancelling the job:
 * it has finished by then, and the README says that answer is 409.
 */
class ReadmeExamplesTest {
    static final Path REPO = DocExamples.REPO;

    @Test
    void every_request_in_the_readme_succeeds_against_the_demo(@TempDir Path dir) throws Exception {
        List<String> commands = curlCommands(Files.readString(REPO.resolve("README.md")));
        assertTrue(commands.size() >= 20, "found only " + commands.size() + " examples");
        try (TestServer server = new TestServer(dir)) {
            new DemoLoader(server.base()).load();
            String jobId = null;
            String estimateId = null;
            for (String command : commands) {
                if (command.contains("ESTIMATE_ID") && estimateId == null) {
                    JsonNode job = server.awaitJob(jobId);
                    assertEquals("succeeded", job.get("state").asText(), job.toString());
                    estimateId = job.get("estimateId").asText();
                }
                String line = command.replace("JOB_ID", String.valueOf(jobId)).replace("ESTIMATE_ID", String.valueOf(estimateId));
                TestServer.Reply reply = server.send(CurlLine.parse(line, server.base(), REPO).request());
                if (line.contains("/v1/jobs/" + jobId + "/cancel")) {
                    assertTrue(reply.status() / 100 == 2 || reply.status() == 409 && reply.body().contains("/problems/conflict"),
                            line + "\n" + reply.status() + " " + reply.body());
                    continue;
                }
                assertEquals(2, reply.status() / 100, line + "\n" + reply.status() + " " + reply.body());
                if (jobId == null && reply.body().contains("\"jobId\"")) {
                    jobId = reply.json().get("jobId").asText();
                }
            }
            assertTrue(jobId != null && estimateId != null, "the block posts a trace and reads its estimate");
        }
    }

    @Test
    void curl_lines_are_read_as_the_requests_they_send() {
        CurlLine post = CurlLine.parse("curl -s -X POST \"$B/v1/models?x=1\" -H 'Content-Type: application/json' -d '{\"a\": 1}'",
                "http://h:1", REPO);
        assertEquals("POST", post.method());
        assertEquals("http://h:1/v1/models?x=1", post.url());
        assertEquals(Map.of("Content-Type", "application/json"), post.headers());
        assertEquals("{\"a\": 1}", new String(post.body(), StandardCharsets.UTF_8));
        CurlLine get = CurlLine.parse("curl -s $B/healthz", "http://h:1", REPO);
        assertEquals("GET", get.method());
        assertEquals(null, get.body());
        assertEquals(List.of("a b", "c", "d'e"), CurlLine.words("'a b'  c \"d'e\""));
        assertThrows(IllegalArgumentException.class, () -> CurlLine.parse("curl -s -L $B/healthz", "http://h:1", REPO));
    }

    /** The commands of the first bash block after "## API by example" in a page. */
    static List<String> curlCommands(String page) {
        return DocExamples.bashBlocks(page.substring(page.indexOf("## API by example"))).get(0);
    }
}
