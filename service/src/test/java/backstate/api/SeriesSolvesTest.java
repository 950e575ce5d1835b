package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.file.Path;
import java.util.Map;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Series re-solves run on a bounded pool: past its threads and queue a request is answered 503
 * with Retry-After, the problem type of a full job queue. The pool is filled with solves held on
 * latches, so the limit is reached deterministically.
 */
class SeriesSolvesTest {
    private final CountDownLatch release = new CountDownLatch(1);

    /** A solve that holds its thread until the test releases it. */
    private Future<String> held(SeriesSolves pool, CountDownLatch started) {
        return pool.start(() -> {
            started.countDown();
            release.await();
            return "done";
        });
    }

    @Test
    void past_threads_and_queue_a_solve_is_refused_with_503_and_the_held_ones_finish() throws Exception {
        try (SeriesSolves pool = new SeriesSolves(1, 1)) {
            CountDownLatch started = new CountDownLatch(1);
            Future<String> running = held(pool, started);
            assertTrue(started.await(30, TimeUnit.SECONDS), "the first solve takes the one thread");
            Future<String> waiting = held(pool, new CountDownLatch(1));
            ApiProblem refused = assertThrows(ApiProblem.class, () -> pool.start(() -> "third"));
            assertEquals(503, refused.status());
            assertEquals("/problems/service-busy", refused.toProblem().type());
            release.countDown();
            assertEquals("done", running.get(30, TimeUnit.SECONDS));
            assertEquals("done", waiting.get(30, TimeUnit.SECONDS));
            assertEquals("again", pool.run(() -> "again"), "a freed pool takes solves again");
        }
    }

    @Test
    void a_failed_solve_surfaces_its_own_exception() {
        try (SeriesSolves pool = new SeriesSolves(1, 0)) {
            IllegalStateException e = assertThrows(IllegalStateException.class, () -> pool.run(() -> {
                throw new IllegalStateException("broken trace");
            }));
            assertEquals("broken trace", e.getMessage());
        }
    }

    @Test
    void the_series_route_answers_503_with_retry_after_while_every_slot_is_taken(@TempDir Path dir) throws Exception {
        try (TestServer server = new TestServer(dir, Map.of("BACKSTATE_SERIES_THREADS", "1", "BACKSTATE_SERIES_QUEUE", "0"))) {
            server.publishDemoModels();
            String estimateId = solvedEstimate(server);
            CountDownLatch started = new CountDownLatch(1);
            Future<String> holding = held(server.app().api().series(), started);
            assertTrue(started.await(30, TimeUnit.SECONDS));

            TestServer.Reply busy = server.get("/v1/estimates/" + estimateId + "/series?maxPoints=10");
            assertEquals(503, busy.status(), busy.body());
            assertEquals("5", busy.headers().firstValue("Retry-After").orElse(""));
            assertEquals("application/problem+json", busy.contentType());
            assertEquals("/problems/service-busy", busy.json().get("type").asText(), busy.body());

            release.countDown();
            assertEquals("done", holding.get(30, TimeUnit.SECONDS));
            // The freed thread goes back to the pool a moment after its solve's answer (no queue to wait in).
            TestServer.Reply served = server.get("/v1/estimates/" + estimateId + "/series?maxPoints=10");
            for (int attempt = 0; served.status() == 503 && attempt < 500; attempt++) {
                Thread.sleep(10);
                served = server.get("/v1/estimates/" + estimateId + "/series?maxPoints=10");
            }
            assertEquals(200, served.status(), served.body());
        }
    }

    @Test
    void a_caller_holding_the_series_is_answered_304_without_a_solve_while_every_slot_is_taken(@TempDir Path dir)
            throws Exception {
        try (TestServer server = new TestServer(dir, Map.of("BACKSTATE_SERIES_THREADS", "1", "BACKSTATE_SERIES_QUEUE", "0"))) {
            server.publishDemoModels();
            String path = "/v1/estimates/" + solvedEstimate(server) + "/series?maxPoints=10";
            String tag = server.get(path).headers().firstValue("ETag").orElseThrow();
            CountDownLatch started = new CountDownLatch(1);
            Future<String> holding = heldOnceFree(server.app().api().series(), started);
            assertTrue(started.await(30, TimeUnit.SECONDS));

            TestServer.Reply held = server.send(java.net.http.HttpRequest.newBuilder(
                    java.net.URI.create(server.base() + path)).header("If-None-Match", tag).GET());
            assertEquals(304, held.status(), "a solve would have been refused with 503: " + held.body());
            assertEquals(503, server.get(path).status(), "the slot is still taken");
            release.countDown();
            assertEquals("done", holding.get(30, TimeUnit.SECONDS));
        }
    }

    /**
     * {@link #held} as soon as the pool takes it: the thread of a solve that just answered goes back
     * to the pool a moment after its answer, and with no queue a solve offered before that is refused.
     */
    private Future<String> heldOnceFree(SeriesSolves pool, CountDownLatch started) throws InterruptedException {
        for (int attempt = 0; ; attempt++) {
            try {
                return held(pool, started);
            } catch (ApiProblem busy) {
                if (attempt == 500) {
                    throw busy;
                }
                Thread.sleep(10);
            }
        }
    }

    private static String solvedEstimate(TestServer server) throws Exception {
        JsonNode fleet = server.mapper.readTree(TestServer.TEST_DATA.resolve("demo/fleet.json").toFile());
        JsonNode unit = fleet.get("units").get(0);
        byte[] body = java.nio.file.Files.readAllBytes(TestServer.TEST_DATA.resolve("demo").resolve(unit.get("trace").asText()));
        String type = unit.get("trace").asText().endsWith(".csv") ? "text/csv" : "application/json";
        TestServer.Reply accepted = server.post("/v1/units/" + unit.get("unitId").asText()
                + "/traces?model=reefer-40&version=1", type, body);
        assertEquals(202, accepted.status(), accepted.body());
        JsonNode job = server.awaitJob(accepted.json().get("jobId").asText());
        assertEquals("succeeded", job.get("state").asText(), job.toString());
        return job.get("estimateId").asText();
    }
}
