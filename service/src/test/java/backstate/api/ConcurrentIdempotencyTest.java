package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.stream.Collectors;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.Parameter;
import org.junit.jupiter.params.ParameterizedClass;
import org.junit.jupiter.params.provider.EnumSource;

/**
 * Many clients retrying the same trace post with the same Idempotency-Key at the same moment, over
 * HTTP, on each database engine. What must hold is the promise of the Idempotency-Key header
 * (draft-ietf-httpapi-idempotency-key-header-07, section 2): the request takes effect once —
 * one trace, one job — and every answer names that one job; exactly one answer is the original
 * and every other says it is a replay (Backstate-Replayed: true).
 */
@ParameterizedClass
@EnumSource(Engine.class)
class ConcurrentIdempotencyTest {
    static final int CLIENTS = 32;
    static final String UNIT = "RCX-31337";
    static final String KEY = "retry-of-upload-0001";

    @Parameter
    Engine engine;

    @Test
    void thirty_two_posts_at_once_with_one_key_make_one_trace_and_one_job_that_every_answer_names(@TempDir Path dir)
            throws Exception {
        // All 32 posts come from one address with no key: lift the per-caller upload cap (32 by
        // default) above them, so the race under test is the idempotency key's, not the cap's.
        try (TestServer server = new TestServer(engine, dir, Map.of("BACKSTATE_MAX_UPLOADS_PER_KEY", "64"))) {
            server.publishDemoModels();
            List<TestServer.Reply> replies = postAllAtOnce(server);

            Set<Integer> statuses = replies.stream().map(TestServer.Reply::status).collect(Collectors.toSet());
            assertEquals(Set.of(202), statuses, () -> replies.stream().filter(r -> r.status() != 202)
                    .findFirst().map(TestServer.Reply::body).orElse(""));
            Set<String> jobIds = replies.stream().map(r -> r.json().get("jobId").asText()).collect(Collectors.toCollection(TreeSet::new));
            assertEquals(1, jobIds.size(), "answers name different jobs: " + jobIds);
            String jobId = jobIds.iterator().next();
            long originals = replies.stream()
                    .filter(r -> !r.headers().firstValue(TraceRoutes.REPLAYED_HEADER).orElse("").equals("true")).count();
            assertEquals(1, originals, "answers not marked replayed");

            assertEquals(1, count(server, "SELECT COUNT(*) FROM traces WHERE unit_id = ?"));
            assertEquals(1, count(server, "SELECT COUNT(*) FROM jobs j JOIN traces t ON t.id = j.trace_id WHERE t.unit_id = ?"));
            assertEquals(1, count(server, "SELECT COUNT(*) FROM idempotency_keys WHERE unit_id = ?"));
            assertEquals(jobId, firstText(server, "SELECT job_id FROM idempotency_keys WHERE unit_id = ?"));
        }
    }

    /** CLIENTS threads wait at one gate, then all post the same trace with the same key. */
    static List<TestServer.Reply> postAllAtOnce(TestServer server) throws Exception {
        byte[] trace = AuthFixture.file(AuthFixture.TRACE_FILE);
        String path = "/v1/units/" + UNIT + "/traces?model=reefer-40&version=1";
        CountDownLatch gate = new CountDownLatch(1);
        ExecutorService pool = Executors.newFixedThreadPool(CLIENTS);
        try {
            List<Future<TestServer.Reply>> pending = new ArrayList<>();
            for (int i = 0; i < CLIENTS; i++) {
                pending.add(pool.submit(() -> {
                    gate.await();
                    return server.post(path, "text/csv", trace, "Idempotency-Key", KEY);
                }));
            }
            gate.countDown();
            List<TestServer.Reply> replies = new ArrayList<>();
            for (Future<TestServer.Reply> f : pending) {
                replies.add(f.get());
            }
            return replies;
        } finally {
            pool.shutdownNow();
        }
    }

    static long count(TestServer server, String sql) throws Exception {
        return Long.parseLong(firstText(server, sql));
    }

    static String firstText(TestServer server, String sql) throws Exception {
        try (Connection c = server.database().connect(); PreparedStatement ps = c.prepareStatement(sql)) {
            ps.setString(1, UNIT);
            try (ResultSet rs = ps.executeQuery()) {
                rs.next();
                return rs.getString(1);
            }
        }
    }
}
