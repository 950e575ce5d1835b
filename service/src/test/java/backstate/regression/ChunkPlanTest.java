package backstate.regression;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.store.JobRow;
import backstate.store.JobStore;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Optional;
import java.util.UUID;
import org.junit.jupiter.api.Test;

/**
 * How runs split, checked against counts worked out by hand, and a chunk's result surviving its
 * trip through JSON with numbers that are not finite.
 */
class ChunkPlanTest {
    static final String RUN = "0b9f3c1e-6d1a-4c7e-9a43-2f0f5d7e8a11";

    @Test
    void a_run_of_501_traces_at_500_a_chunk_splits_into_two_chunks_of_250_and_251() {
        // Chunk i holds traces [⌊i·n/k⌋, ⌊(i+1)·n/k⌋) with k = ⌈501/500⌉ = 2: [0, 250) and [250, 501).
        List<ChunkPlan.Chunk> chunks = ChunkPlan.of(RUN, 501, 500).chunks();
        assertEquals(List.of(250, 251), chunks.stream().map(ChunkPlan.Chunk::size).toList());
        assertEquals(0, chunks.get(0).from());
        assertEquals(250, chunks.get(1).from());
        assertEquals(501, chunks.get(1).to());
    }

    @Test
    void chunk_sizes_differ_by_at_most_one_and_cover_every_trace_once() {
        // 100 000 traces at 500: 200 chunks. 20 at 3: k = ⌈20/3⌉ = 7, bounds ⌊20·i/7⌋ = 0 2 5 8 11 14 17 20.
        assertEquals(200, ChunkPlan.of(RUN, 100_000, 500).chunks().size());
        List<ChunkPlan.Chunk> chunks = ChunkPlan.of(RUN, 20, 3).chunks();
        assertEquals(List.of(2, 3, 3, 3, 3, 3, 3), chunks.stream().map(ChunkPlan.Chunk::size).toList());
        for (int i = 1; i < chunks.size(); i++) {
            assertEquals(chunks.get(i - 1).to(), chunks.get(i).from());
        }
    }

    @Test
    void only_a_run_of_more_traces_than_one_chunk_is_split() {
        JobStore noJobs = new JobStore() {
            @Override
            public Optional<JobRow> findJob(String id) {
                return Optional.empty();
            }

            @Override
            public boolean cancelIfQueued(String jobId, Instant now) {
                return false;
            }
        };
        RunTools tools = new RunTools(null, noJobs, null, null, null, new Chunking(500, Duration.ofMillis(1), Duration.ofSeconds(1)), null);
        assertFalse(tools.splits(500));
        assertTrue(tools.splits(501));
        assertFalse(new RunTools(null, null, null, null, null, Chunking.DEFAULTS, null).splits(100_000),
                "without the jobs' read side a run is never split");
    }

    @Test
    void chunk_ids_are_the_same_on_every_attempt_and_differ_by_run_and_by_slice() {
        String id = ChunkPlan.chunkId(RUN, 0, 2);
        assertEquals(id, ChunkPlan.of(RUN, 20, 3).chunks().get(0).id());
        assertEquals(3, UUID.fromString(id).version(), "a name-based UUID, RFC 4122 version 3");
        assertNotEquals(id, ChunkPlan.chunkId("another-run", 0, 3));
        assertNotEquals(id, ChunkPlan.chunkId(RUN, 0, 3));
    }

    @Test
    void a_chunk_result_read_back_from_json_judges_exactly_as_the_comparisons_it_was_written_from() throws Exception {
        ObjectMapper mapper = Json.mapper(Limits.DEFAULTS);
        // An infinite standard error makes the shift 0 (hypot(∞, ·) = ∞), a NaN one makes it undefined:
        // both must come back as they were, or the unit's largest shift would change.
        Fit baseline = RegressionReportTest.fit(100, 100, new double[] {10, 20},
                new double[] {Double.POSITIVE_INFINITY, Double.NaN});
        Fit candidate = RegressionReportTest.fit(150, 100, new double[] {11, 19}, new double[] {0.5, 0.5});
        RegressionReport written = RegressionReportTest.report(1.0, 0.0, 0.5, 3);
        written.add("U1", "t1", "2026-01-01T00:00:00Z", "2026-01-02T00:00:00Z", 1, baseline, candidate);
        written.add("U1", "t2", "2026-01-01T00:00:00Z", "2026-01-02T00:00:00Z", 1, baseline,
                Fit.notSolved(Fit.Status.UNOBSERVABLE, "unobservable: state b"));
        written.add("U2", "t3", "2026-01-01T00:00:00Z", "2026-01-02T00:00:00Z", 1, candidate, baseline);

        String json = mapper.writeValueAsString(new ChunkResult(RUN, 0, written.comparisons()));
        ChunkResult back = mapper.readValue(json, ChunkResult.class);
        RegressionReport read = RegressionReportTest.report(1.0, 0.0, 0.5, 3);
        back.traces().forEach(read::add);

        assertTrue(back.covers(List.of("t1", "t2", "t3")));
        assertEquals(written.build(true), read.build(true));
        assertEquals(mapper.writeValueAsString(written.build(true)), mapper.writeValueAsString(read.build(true)));
    }
}
