package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Two replicas on one PostgreSQL database answer as one service: what one writes, the other reads;
 * a key issued or revoked on one holds on the other at once (no replica caches keys or results);
 * a post retried on the other replica with the same Idempotency-Key is a replay of the first.
 */
class ReplicaAgreementTest {

    @TempDir
    Path dir;
    private TestServer first;
    private TestServer second;

    @BeforeEach
    void start() {
        first = new TestServer(Engine.POSTGRESQL, dir, AuthFixture.env());
        second = new TestServer(first.database(), AuthFixture.env());
        AuthFixture.publishDemoModels(first);
    }

    @AfterEach
    void stop() {
        second.close();
        first.close();
    }

    @Test
    void a_key_issued_on_one_replica_works_on_the_other_until_revoked_there() {
        AuthFixture.Key reader = AuthFixture.issue(first, "reader", null, "dashboard");
        assertEquals(200, AsKey.bearer(second, reader.text()).get("/v1/models").status());

        AuthFixture.revoke(second, reader.id());

        assertEquals(401, AsKey.bearer(first, reader.text()).get("/v1/models").status());
        assertEquals(401, AsKey.bearer(second, reader.text()).get("/v1/models").status());
    }

    @Test
    void a_post_retried_on_the_other_replica_is_a_replay_and_its_estimate_reads_the_same_on_both() throws Exception {
        AsKey onFirst = AsKey.bearer(first, AuthFixture.ADMIN_KEY);
        AsKey onSecond = AsKey.bearer(second, AuthFixture.ADMIN_KEY);
        String path = "/v1/units/RCX-12471/traces?model=reefer-40&version=1";
        byte[] trace = AuthFixture.file(AuthFixture.TRACE_FILE);

        TestServer.Reply posted = post(onFirst, path, trace);
        TestServer.Reply retried = post(onSecond, path, trace);

        assertEquals(List.of(202, 202), List.of(posted.status(), retried.status()));
        String job = posted.json().get("jobId").asText();
        assertEquals(job, retried.json().get("jobId").asText());
        assertEquals("true", retried.headers().firstValue("Backstate-Replayed").orElse(""));
        assertEquals("succeeded", awaitFinished(onSecond, job));
        String latest = "/v1/units/RCX-12471/estimates/latest";
        assertEquals(onFirst.get(latest).body(), onSecond.get(latest).body());
        assertEquals(1, onSecond.get("/v1/units/RCX-12471/estimates").json().get("items").size());
    }

    /** Polls the job through the given caller; a bounded hang guard, not a timing assertion. */
    private static String awaitFinished(AsKey caller, String job) throws InterruptedException {
        return TestServer.awaitFinished(caller::get, "/v1/jobs/" + job).path("state").asText();
    }

    private static TestServer.Reply post(AsKey caller, String path, byte[] body) {
        return caller.server().send(java.net.http.HttpRequest.newBuilder(java.net.URI.create(caller.server().base() + path))
                .POST(java.net.http.HttpRequest.BodyPublishers.ofByteArray(body))
                .header("Content-Type", "text/csv").header("Idempotency-Key", "gateway-7-batch-42")
                .header("Authorization", caller.authorization()));
    }
}
