package backstate.store;

import java.nio.file.Path;
import java.time.Clock;

/**
 * Run in a child JVM by {@link CrashTest}: submits traces with keys k-0, k-1, ... and claims
 * every third job, printing a line only after each call returned, until it is killed.
 */
public final class CrashChild {

    private CrashChild() {
    }

    public static void main(String[] args) throws Exception {
        SqliteDatabase store = new SqliteDatabase(Path.of(args[0]), Clock.systemUTC());
        Clock clock = Clock.systemUTC();
        for (int i = 0; ; i++) {
            Submission s = store.traces().submitTrace(StoreFixture.trace("unit-crash"), StoreFixture.key("k-" + i), Integer.MAX_VALUE,
                    clock.instant());
            System.out.println("ACK " + i + " " + s.jobId());
            if (i % 3 == 0) {
                store.queue().claimNext(1, clock.instant()).forEach(job -> System.out.println("CLAIMED " + job.id()));
            }
            System.out.flush();
        }
    }
}
