package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.cli.CommandRun;
import backstate.cli.CompareVersionsCommand;
import java.nio.file.Path;
import java.util.List;
import java.util.Locale;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * A CI pipeline with a pipeline key, against a server with keys on: compare-versions starts a
 * run, follows it and gets its verdict; a reader key is refused (403) and the command exits 2.
 * The rest of what a pipeline key may and may not do is walked by AccessMatrixTest.
 */
class PipelineKeyTest {
    /** Three units, each given the same demo trace (RCX-12471's), so each fares as RCX-12471 does. */
    static final List<String> UNITS = List.of("RCX-100", "RCX-101", "RCX-102");
    static final double TOLERANCE = 1.0;

    static CommandRun compareVersions(String server, String key) {
        return CommandRun.of(CompareVersionsCommand::run, "--server", server, "--family", "reefer-40", "--baseline", "1",
                "--candidate", "2", "--tolerance-chi2", Double.toString(TOLERANCE), "--api-key", key);
    }

    @Test
    void a_pipeline_key_gets_a_verdict_and_a_reader_key_is_refused(@TempDir Path dir) throws Exception {
        try (TestServer server = new TestServer(dir, AuthFixture.env())) {
            AuthFixture.publishDemoModels(server);
            AsKey admin = AsKey.bearer(server, AuthFixture.ADMIN_KEY);
            TestServer.Reply v2 = admin.post("/v1/models/reefer-40/versions", "application/json",
                    AuthFixture.file("demo/models/reefer-40.v2.json"));
            assertEquals(201, v2.status(), v2.body());
            for (String unit : UNITS) {
                String job = AuthFixture.jobFor(server, unit);
                assertEquals("succeeded", awaitJob(admin, job), job);
            }
            String pipeline = AuthFixture.issue(server, "pipeline", null, "release pipeline").text();
            String reader = AuthFixture.issue(server, "reader", null, "dashboard").text();

            // generate_demo.py's table (test-data/demo/README.md): RCX-12471's χ²/dof under v1 and v2.
            DemoVersions.TableRow row = DemoVersions.chi2Table().get("RCX-12471");
            boolean worse = row.delta() > TOLERANCE + DemoVersions.TABLE_ROUNDING;
            assertTrue(worse || row.delta() < TOLERANCE - DemoVersions.TABLE_ROUNDING, "the table decides: " + row);
            CommandRun run = compareVersions(server.base(), pipeline);
            assertEquals(worse ? 1 : 0, run.exit(), run.out() + run.err()); // 1 fail, 0 pass
            assertTrue(run.out().contains(String.format(Locale.ROOT, "%s (rule worse-share): %d of 3 compared units",
                    worse ? "FAIL" : "PASS", worse ? 3 : 0)), run.out());

            CommandRun refused = compareVersions(server.base(), reader);
            assertEquals(2, refused.exit(), refused.out() + refused.err()); // 2: bad input, the server's refusal printed
            assertTrue(refused.err().contains("the server refused the run (HTTP 403)"), refused.err());
        }
    }

    static String awaitJob(AsKey caller, String jobId) throws InterruptedException {
        return TestServer.awaitFinished(caller::get, "/v1/jobs/" + jobId).get("state").asText();
    }
}
