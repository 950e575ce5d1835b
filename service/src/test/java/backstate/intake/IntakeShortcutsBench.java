package backstate.intake;

import static backstate.bench.CallTimes.median;
import static backstate.bench.CallTimes.millis;
import static backstate.bench.CallTimes.minAndMedian;
import static backstate.bench.CallTimes.sorted;

import backstate.formats.CheckedModel;
import backstate.formats.DocumentSolver;
import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedTrace;
import backstate.formats.TraceCodec;
import backstate.formats.TraceOptions;
import backstate.formats.TraceReader;
import backstate.reliability.ReeferTraces;
import backstate.store.NewTrace;
import backstate.store.QueueFullException;
import backstate.store.StoreFixture;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;

/**
 * What the two intake shortcuts could save a trace's estimate job, against what the job does
 * without them, on demo-like traces (ReeferTraces) of 10³, 10⁵ and 10⁶ samples:
 * <ul>
 *   <li>a fresh-trace cache saves the job the decode of the stored payload ({@link TraceCodec});
 *       its cost is a map lookup;</li>
 *   <li>a solve-ahead overlaps the job's solve with the post's durable write, so it saves at most
 *       the shorter of the two, on one more thread.</li>
 * </ul>
 * Min and median per call; prints a Markdown table and asserts nothing. Run by {@code bench/intake.sh}.
 */
public final class IntakeShortcutsBench {
    private static final int[] SAMPLES = {1_000, 100_000, 1_000_000};

    private IntakeShortcutsBench() {
    }

    public static void main(String[] args) throws IOException {
        Path testData = Path.of(args.length > 0 ? args[0] : "test-data");
        int runs = args.length > 1 ? Integer.parseInt(args[1]) : 11;
        ObjectMapper mapper = Json.mapper(Limits.DEFAULTS);
        TraceCodec codec = new TraceCodec(mapper);
        ModelDocument document = mapper.readValue(ReeferTraces.modelFile(testData).toFile(), ModelDocument.class);
        CheckedModel model = CheckedModel.of(document, Limits.DEFAULTS);
        ReeferTraces reefer = new ReeferTraces(testData);
        Path dir = Files.createTempDirectory("intake-bench");
        try (StoreFixture db = new StoreFixture(dir)) {
            System.out.println("| samples | stored bytes | decode (job without cache) | take from memory (with cache) | take / decode"
                    + " | solve (job) | cache saves, of decode + solve | durable write (post) | solve-ahead saves at most,"
                    + " of write + solve |");
            System.out.println("|---|---|---|---|---|---|---|---|---|");
            for (int n : SAMPLES) {
                int batch = Math.max(1, 100_000 / n);
                ParsedTrace parsed = new TraceReader(Limits.DEFAULTS).readCsv(
                        new ByteArrayInputStream(reefer.csv(n, 7)), document, TraceOptions.NONE);
                byte[] payload = codec.encode(parsed);
                Map<String, ParsedTrace> memory = new ConcurrentHashMap<>();
                double[] decode = sorted(runs, batch, () -> codec.decode(payload));
                double[] take = sorted(runs, batch, () -> {
                    memory.put("t", parsed);
                    return memory.remove("t");
                });
                double[] solve = sorted(runs, batch, () -> DocumentSolver.solve(model, parsed, false));
                int[] unit = {0};
                double[] write = sorted(runs, batch, () -> store(db, new NewTrace("U-" + n + "-" + unit[0]++,
                        StoreFixture.FAMILY, StoreFixture.VERSION, n, 0, n, payload)));
                double cacheSaves = median(decode) - median(take);
                double aheadSaves = Math.min(median(solve), median(write));
                System.out.printf(Locale.ROOT, "| 10^%d | %d | %s | %s | %.5f | %s | %s (%.0f %%) | %s | %s (%.0f %%) |%n",
                        Math.round(Math.log10(n)), payload.length, minAndMedian(decode), minAndMedian(take),
                        median(take) / median(decode), minAndMedian(solve), millis(cacheSaves),
                        100 * cacheSaves / (median(decode) + median(solve)), minAndMedian(write), millis(aheadSaves),
                        100 * aheadSaves / (median(solve) + median(write)));
            }
        }
        System.out.println();
        System.out.println("Times are min / median per call. The cache saves a job its decode (medians); a solve-ahead"
                + " saves at most the shorter of solve and write (medians), the overlap if both ran at once on free cores.");
    }

    private static Object store(StoreFixture db, NewTrace trace) {
        try {
            return db.store.traces().submitTrace(trace, null, Integer.MAX_VALUE, StoreFixture.T0);
        } catch (QueueFullException e) {
            throw new IllegalStateException("no queue limit was set", e);
        }
    }
}
