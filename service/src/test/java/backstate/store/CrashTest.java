package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStreamReader;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;
import org.junit.jupiter.api.io.TempDir;

/**
 * After SQLite's crash tests: a child process writes until it is killed with SIGKILL after a
 * chosen number of acknowledged submissions; then the file must pass integrity_check, hold every
 * acknowledged submission (and at most the one in flight besides), and reopening must put every
 * job the child had claimed back in the queue.
 */
class CrashTest {

    private static final long HANG_GUARD_SECONDS = 60;
    private static final int UUID_LENGTH = 36;

    @TempDir
    Path dir;

    @ParameterizedTest(name = "killed after {0} acknowledged submissions")
    @ValueSource(ints = {1, 7, 40})
    void a_killed_writer_loses_nothing_it_acknowledged(int killAfter) throws Exception {
        StoreFixture fx = new StoreFixture(dir);
        fx.close();
        Map<Integer, String> acked = new LinkedHashMap<>();
        Set<String> claimed = new HashSet<>();

        runChildAndKill(fx.file, killAfter, acked, claimed);

        assertEquals("ok", fx.integrityCheck());
        long traces = fx.rows("traces");
        assertTrue(traces == acked.size() || traces == acked.size() + 1, traces + " traces for " + acked.size() + " acks");
        try (SqliteDatabase reopened = new SqliteDatabase(fx.file, fx.clock)) {
            for (Map.Entry<Integer, String> ack : acked.entrySet()) {
                Submission replay = reopened.traces().submitTrace(StoreFixture.trace("unit-crash"), StoreFixture.key("k-" + ack.getKey()),
                        Integer.MAX_VALUE, StoreFixture.T0);
                assertEquals(ack.getValue(), replay.jobId(), "key k-" + ack.getKey());
            }
            for (String jobId : claimed) {
                assertEquals("queued", reopened.jobs().findJob(jobId).orElseThrow().state());
            }
        }
        assertEquals(0, fx.count("SELECT COUNT(*) FROM jobs WHERE state = 'running'"));
    }

    private static void runChildAndKill(Path file, int killAfter, Map<Integer, String> acked, Set<String> claimed)
            throws Exception {
        Process child = new ProcessBuilder(Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                "-cp", System.getProperty("java.class.path"), CrashChild.class.getName(), file.toString())
                .redirectError(ProcessBuilder.Redirect.DISCARD)
                .start();
        try (BufferedReader out = new BufferedReader(
                new InputStreamReader(child.getInputStream(), StandardCharsets.UTF_8))) {
            readUntil(out, killAfter, acked, claimed);
            // SIGKILL: no shutdown hooks, no close. Through the handle, so the pipe stays readable.
            child.toHandle().destroyForcibly();
            assertTrue(child.waitFor(HANG_GUARD_SECONDS, TimeUnit.SECONDS));
            // Lines still in the pipe were printed, so acknowledged, before the kill.
            readUntil(out, Integer.MAX_VALUE, acked, claimed);
        }
        assertTrue(acked.size() >= killAfter, "the child stopped after " + acked.size() + " submissions");
    }

    private static void readUntil(BufferedReader out, int acks, Map<Integer, String> acked, Set<String> claimed)
            throws IOException {
        String line;
        while (acked.size() < acks && (line = out.readLine()) != null) {
            String[] parts = line.split(" ");
            String id = parts[parts.length - 1];
            if (id.length() != UUID_LENGTH) {
                return; // a line cut short by the kill acknowledges nothing
            }
            if (parts[0].equals("ACK")) {
                acked.put(Integer.parseInt(parts[1]), id);
            } else {
                claimed.add(id);
            }
        }
    }
}
