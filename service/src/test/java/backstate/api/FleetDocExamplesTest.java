package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.cli.DemoLoader;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Runs the "API by example" block of docs/fleet-and-planning.md with real curl against a real
 * server holding the demo fleet (loaded as {@code backstate demo} loads it), so the examples
 * cannot rot. Every command must exit 0 and, through curl's --fail-with-body, answer below 400.
 */
class FleetDocExamplesTest {
    static final Path REPO = DocExamples.REPO;

    @Test
    void every_curl_example_in_the_fleet_and_planning_doc_answers_successfully(@TempDir Path dir) throws Exception {
        List<String> commands = ReadmeExamplesTest.curlCommands(Files.readString(REPO.resolve("docs/fleet-and-planning.md")));
        assertTrue(commands.size() >= 7, "found only " + commands.size() + " examples");
        try (TestServer server = new TestServer(dir)) {
            new DemoLoader(server.base()).load();
            awaitFleetSolved(server);
            for (String command : commands) {
                String out = DocExamples.run(command, server.base());
                assertFalse(out.contains("\"status\":5"), command + "\n" + out);
                assertTrue(out.startsWith("{"), command + "\n" + out);
            }
        }
    }

    /** The demo loader queues one trace per unit; wait (bounded) until all 20 have an estimate. */
    private static void awaitFleetSolved(TestServer server) throws InterruptedException {
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(60);
        while (System.nanoTime() < deadline) {
            if (server.get("/v1/fleet/reefer-40/summary?version=1").json().get("versions").get(0).get("estimates").asInt() == 20) {
                return;
            }
            Thread.sleep(50);
        }
        throw new AssertionError("the demo fleet was not solved within 60 s");
    }
}
