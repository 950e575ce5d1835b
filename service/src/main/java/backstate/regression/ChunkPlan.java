package backstate.regression;

import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;
import java.util.UUID;

/**
 * How one run splits: ⌈n / tracesPerChunk⌉ consecutive slices of its traces in run order, their
 * sizes differing by at most one. A chunk's job ID is derived from the run's ID and its slice's
 * bounds, so every attempt of the run, on any replica, names the same chunks and queues each at
 * most once; a run split another way (another chunk size) names other chunks.
 */
record ChunkPlan(List<Chunk> chunks) {

    /** Traces [from, to) of the run, as the job {@code id}. */
    record Chunk(int index, String id, int from, int to) {
        int size() {
            return to - from;
        }
    }

    ChunkPlan {
        chunks = List.copyOf(chunks);
    }

    static ChunkPlan of(String runId, int traces, int tracesPerChunk) {
        int count = (int) ((traces + (long) tracesPerChunk - 1) / tracesPerChunk);
        List<Chunk> chunks = new ArrayList<>(count);
        for (int i = 0; i < count; i++) {
            int from = (int) ((long) i * traces / count);
            int to = (int) ((long) (i + 1) * traces / count);
            chunks.add(new Chunk(i, chunkId(runId, from, to), from, to));
        }
        return new ChunkPlan(chunks);
    }

    /** A name-based UUID (RFC 4122 version 3): the same run and bounds give the same ID everywhere. */
    static String chunkId(String runId, int from, int to) {
        String name = "backstate regression chunk " + runId + " traces " + from + "-" + to;
        return UUID.nameUUIDFromBytes(name.getBytes(StandardCharsets.UTF_8)).toString();
    }
}
