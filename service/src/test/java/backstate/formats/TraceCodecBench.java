package backstate.formats;

import backstate.bench.CallTimes;
import backstate.estimation.Trace;
import backstate.reliability.ReeferTraces;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.sun.management.ThreadMXBean;
import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.lang.management.ManagementFactory;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.Locale;
import java.util.SplittableRandom;
import java.util.function.Supplier;

/**
 * Stored-trace encode and decode, format 1 (row-wise doubles, {@link TraceCodecV1Oracle}) against
 * format 2 ({@link TraceCodec}): bytes, and min and median wall time per call, on demo-like traces
 * (CSV decimals as a gateway writes them) of 10^3 and 10^6 samples and on a 10^6-sample trace of
 * arbitrary doubles (every column raw). Prints a Markdown table; asserts nothing. Run by
 * {@code bench/codec.sh}.
 */
public final class TraceCodecBench {
    private static final ThreadMXBean THREADS = (ThreadMXBean) ManagementFactory.getThreadMXBean();
    /** Calls a timed run makes, so a run of the small trace lasts long enough for the clock. */
    private static final int SMALL_BATCH = 200;

    private TraceCodecBench() {
    }

    public static void main(String[] args) throws IOException {
        Path testData = Path.of(args.length > 0 ? args[0] : "test-data");
        int runs = args.length > 1 ? Integer.parseInt(args[1]) : 15;
        ObjectMapper mapper = Json.mapper(Limits.DEFAULTS);
        TraceCodec codec = new TraceCodec(mapper);
        ReeferTraces reefer = new ReeferTraces(testData);
        ModelDocument model = Json.mapper(Limits.DEFAULTS).readValue(ReeferTraces.modelFile(testData).toFile(), ModelDocument.class);

        byte[] smallCsv = reefer.csv(1_000, 7);
        ParsedTrace small = readCsv(smallCsv, model);
        System.out.printf(Locale.ROOT, "CSV parse of the 10^3 trace (%d bytes): %s%n%n", smallCsv.length,
                time(runs, SMALL_BATCH, () -> readCsv(smallCsv, model)));
        ParsedTrace large = readCsv(reefer.csv(1_000_000, 7), model);
        ParsedTrace arbitrary = arbitrary(1_000_000, 2, 2);

        System.out.println("| trace | format | bytes | of format 1 | encode min / median | decode min / median | decode allocated |");
        System.out.println("|---|---|---|---|---|---|---|");
        row(codec, mapper, "demo-like 10^3", small, runs, SMALL_BATCH);
        row(codec, mapper, "demo-like 10^6", large, runs, 1);
        row(codec, mapper, "arbitrary doubles 10^6", arbitrary, runs, 1);
        System.out.printf(Locale.ROOT, "%noutput arrays of a 10^6 × (1 + 2 + 2) trace: %.1f MB%n", 8e-6 * 5_000_000);
    }

    private static void row(TraceCodec codec, ObjectMapper mapper, String name, ParsedTrace trace, int runs, int batch) {
        byte[] v1 = TraceCodecV1Oracle.encode(codec, trace);
        byte[] v2 = codec.encode(trace);
        TraceCodecTest.assertSameTrace(trace, codec.decode(v2));
        // Alternating, so a burst of load from another tenant lands on both formats alike.
        String[] times = new String[5];
        for (int round = 0; round < 2; round++) {
            times[0] = time(runs, batch, () -> TraceCodecV1Oracle.encode(codec, trace));
            times[1] = time(runs, batch, () -> TraceCodecV1Oracle.decode(mapper, v1));
            times[2] = time(runs, batch, () -> codec.decode(v1));
            times[3] = time(runs, batch, () -> codec.encode(trace));
            times[4] = time(runs, batch, () -> codec.decode(v2));
        }
        String encode1 = times[0];
        String encode2 = times[3];
        String decode2 = times[4];
        System.out.printf(Locale.ROOT, "| %s | 1 (code of 0226436) | %d | 100 %% | %s | %s | |%n", name, v1.length, encode1, times[1]);
        System.out.printf(Locale.ROOT, "| %s | 1 (read now) | %d | 100 %% | | %s | %s |%n", name, v1.length, times[2], allocated(codec, v1));
        System.out.printf(Locale.ROOT, "| %s | 2 | %d | %.1f %% | %s | %s | %s |%n", name, v2.length, 100.0 * v2.length / v1.length,
                encode2, decode2, allocated(codec, v2));
    }

    /** Min and median over {@code runs} timed runs of {@code batch} calls each, per call, after as many warm-up runs. */
    private static String time(int runs, int batch, Supplier<Object> call) {
        return CallTimes.minAndMedian(CallTimes.sorted(runs, batch, call));
    }

    private static String allocated(TraceCodec codec, byte[] stored) {
        long id = Thread.currentThread().getId();
        long before = THREADS.getThreadAllocatedBytes(id);
        ParsedTrace decoded = codec.decode(stored);
        long bytes = THREADS.getThreadAllocatedBytes(id) - before;
        return decoded.trace().samples() >= 1_000_000 ? String.format(Locale.ROOT, "%.1f MB", bytes * 1e-6)
                : String.format(Locale.ROOT, "%.1f KB", bytes * 1e-3);
    }

    private static ParsedTrace readCsv(byte[] csv, ModelDocument model) {
        try {
            return new TraceReader(Limits.DEFAULTS).readCsv(new ByteArrayInputStream(csv), model, TraceOptions.NONE);
        } catch (IOException e) {
            throw new IllegalStateException(e);
        }
    }

    /** Gaussian values and times with random steps: no column has a short decimal form. */
    private static ParsedTrace arbitrary(int n, int p, int m) {
        SplittableRandom random = new SplittableRandom(3);
        double[] times = new double[n];
        double[] y = new double[n * p];
        double[] u = new double[n * m];
        for (int k = 1; k < n; k++) {
            times[k] = times[k - 1] + random.nextDouble() + 0.5;
        }
        Arrays.setAll(y, i -> random.nextGaussian());
        Arrays.setAll(u, i -> random.nextGaussian());
        return new ParsedTrace(new Trace(times, y, u, p, m, null), TraceOptions.NONE);
    }
}
