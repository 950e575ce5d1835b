package backstate.regression;

import java.time.Duration;

/**
 * How a run over many traces is split into chunks that any worker of any replica may claim.
 *
 * @param tracesPerChunk a run of more traces than this is split into ⌈n / tracesPerChunk⌉ chunks
 * @param poll           how long a run waits before it looks at its chunks again, when each one
 *                       left is being worked on elsewhere
 * @param stallAfter     a claimed chunk whose progress has not moved for this long (its worker is
 *                       waiting for a solving slot, or froze) is taken back and done by its run;
 *                       a chunk's worker writes its progress at least four times as often
 */
public record Chunking(int tracesPerChunk, Duration poll, Duration stallAfter) {

    /**
     * A pair of solves of a 361-sample demo trace takes about 3 ms, so a chunk of 500 is ~1.5 s of
     * solving: its own cost (one insert, a few progress writes, a result of ~1 KB per trace, the
     * run's reads of it) stays under 1 %, while 10⁴ traces still make 20 chunks to spread over
     * replicas and a chunk lost with its replica costs seconds to redo.
     */
    public static final int DEFAULT_TRACES_PER_CHUNK = 500;
    public static final Chunking DEFAULTS = new Chunking(DEFAULT_TRACES_PER_CHUNK, Duration.ofMillis(200),
            Duration.ofSeconds(10));
    /** Every run in one piece, as before chunks: for a handler that cannot follow chunk jobs. */
    public static final Chunking NEVER = new Chunking(Integer.MAX_VALUE, DEFAULTS.poll, DEFAULTS.stallAfter);

    public Chunking {
        if (tracesPerChunk < 1) {
            throw new IllegalArgumentException("got tracesPerChunk " + tracesPerChunk + ", expected >= 1");
        }
        positive("poll", poll);
        positive("stallAfter", stallAfter);
    }

    /** A chunk's worker writes its progress at least this often while it compares traces. */
    Duration progressEvery() {
        return stallAfter.dividedBy(4);
    }

    private static void positive(String name, Duration value) {
        if (value == null || value.isZero() || value.isNegative()) {
            throw new IllegalArgumentException("got " + name + " " + value + ", expected a positive duration");
        }
    }
}
