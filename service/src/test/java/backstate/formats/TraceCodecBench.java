package backstate.formats;

import backstate.bench.CallTimes;
import backstate.estimation.Trace;
import backstate.reliability.ReeferTraces;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.dataformat.csv.CsvMapper;
import com.fasterxml.jackson.dataformat.csv.CsvParser;
import com.fasterxml.jackson.dataformat.csv.CsvSchema;
import com.sun.management.ThreadMXBean;
import java.io.ByteArrayInputStream;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.lang.management.ManagementFactory;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.SplittableRandom;
import java.util.function.Supplier;
import java.util.zip.DataFormatException;
import java.util.zip.Deflater;
import java.util.zip.Inflater;

/**
 * Stored-trace encode and decode, format 1 (row-wise doubles, {@link TraceCodecV1Oracle}) against
 * format 2 ({@link TraceCodec}) and against the JDK's general-purpose {@link Deflater} (default
 * level) on the format-1 bytes: bytes, and min and median wall time per call, on demo-like traces
 * (CSV decimals as a gateway writes them) of 10^3 and 10^6 samples and on a 10^6-sample trace of
 * arbitrary doubles (every column raw). Before the table, the CSV parse of the demo-like traces by
 * our reader ({@link TraceReader}) and by jackson-dataformat-csv with {@link Double#parseDouble}
 * into the same columns, and the cells' decimals alone by our {@link PlainDecimal} and by a library
 * ({@link CellDecimalBench}). Prints Markdown; asserts nothing. Run by {@code bench/codec.sh}.
 */
public final class TraceCodecBench {
    private static final ThreadMXBean THREADS = (ThreadMXBean) ManagementFactory.getThreadMXBean();
    /** Calls a timed run makes, so a run of the small trace lasts long enough for the clock. */
    private static final int SMALL_BATCH = 200;
    /** Timed runs (and warm-ups) of a call that takes a second or more: the 10^6 CSV parses and deflates. */
    private static final int SLOW_RUNS = 3;
    private static final CsvMapper CSV = new CsvMapper();

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
        byte[] largeCsv = reefer.csv(1_000_000, 7);
        ParsedTrace small = readCsv(smallCsv, model);
        ParsedTrace large = readCsv(largeCsv, model);
        requireSameValues(small, jacksonColumns(smallCsv));
        requireSameValues(large, jacksonColumns(largeCsv));
        System.out.println("| CSV parse, min / median | ours (TraceReader) | jackson-dataformat-csv + Double.parseDouble |");
        System.out.println("|---|---|---|");
        System.out.printf(Locale.ROOT, "| demo-like 10^3 (%d bytes) | %s | %s |%n", smallCsv.length,
                time(runs, SMALL_BATCH, () -> readCsv(smallCsv, model)), time(runs, SMALL_BATCH, () -> jacksonColumns(smallCsv)));
        System.out.printf(Locale.ROOT, "| demo-like 10^6 (%d bytes) | %s | %s |%n%n", largeCsv.length,
                time(SLOW_RUNS, 1, () -> readCsv(largeCsv, model)), time(SLOW_RUNS, 1, () -> jacksonColumns(largeCsv)));
        CellDecimalBench.print(largeCsv, runs);
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
        byte[] deflated = deflate(v1);
        int deflateRuns = batch > 1 ? runs : SLOW_RUNS;
        // Encode: deflate the format-1 bytes; decode: inflate them back (the rows still to be read after).
        System.out.printf(Locale.ROOT, "| %s | 1, then java.util.zip.Deflater (default level) | %d | %.1f %% | %s | %s | |%n", name,
                deflated.length, 100.0 * deflated.length / v1.length, time(deflateRuns, batch, () -> deflate(v1)),
                time(deflateRuns, batch, () -> inflate(deflated, v1.length)));
    }

    /** The format-1 bytes through the JDK's Deflater at its default level (zlib's 6). */
    static byte[] deflate(byte[] bytes) {
        Deflater deflater = new Deflater();
        try {
            deflater.setInput(bytes);
            deflater.finish();
            ByteArrayOutputStream out = new ByteArrayOutputStream(bytes.length / 4);
            byte[] buffer = new byte[64 * 1024];
            while (!deflater.finished()) {
                out.write(buffer, 0, deflater.deflate(buffer));
            }
            return out.toByteArray();
        } finally {
            deflater.end();
        }
    }

    static byte[] inflate(byte[] deflated, int length) {
        Inflater inflater = new Inflater();
        try {
            inflater.setInput(deflated);
            byte[] out = new byte[length];
            int n = inflater.inflate(out);
            if (n != length || !inflater.finished()) {
                throw new IllegalStateException("inflated " + n + " bytes, expected " + length);
            }
            return out;
        } catch (DataFormatException e) {
            throw new IllegalStateException(e);
        } finally {
            inflater.end();
        }
    }

    /**
     * The outside reader's parse: jackson-dataformat-csv's records (no schema: each an array of
     * strings), each cell through {@link Double#parseDouble} (blank: NaN) into one primitive column
     * per header field — the work our reader does, less its checks.
     */
    static double[][] jacksonColumns(byte[] csv) {
        try (JsonParser parser = CSV.getFactory().createParser(csv)) {
            ((CsvParser) parser).setSchema(CsvSchema.emptySchema());
            List<String> header = new ArrayList<>();
            parser.nextToken();
            while (parser.nextToken() == JsonToken.VALUE_STRING) {
                header.add(parser.getText());
            }
            double[][] columns = new double[header.size()][1024];
            int rows = 0;
            while (parser.nextToken() == JsonToken.START_ARRAY) {
                if (rows == columns[0].length) {
                    for (int i = 0; i < columns.length; i++) {
                        columns[i] = Arrays.copyOf(columns[i], 2 * rows);
                    }
                }
                for (int i = 0; parser.nextToken() == JsonToken.VALUE_STRING; i++) {
                    String cell = parser.getText().trim();
                    columns[i][rows] = cell.isEmpty() ? Double.NaN : Double.parseDouble(cell);
                }
                rows++;
            }
            for (int i = 0; i < columns.length; i++) {
                columns[i] = Arrays.copyOf(columns[i], rows);
            }
            return columns;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /** The bench compares like with like: both parses give the same values (header order: time, outputs, inputs). */
    private static void requireSameValues(ParsedTrace ours, double[][] jackson) {
        Trace t = ours.trace();
        for (int k = 0; k < t.samples(); k += 997) {
            double[] row = {t.time(k), t.output(k, 0), t.output(k, 1), t.input(k, 0), t.input(k, 1)};
            for (int i = 0; i < row.length; i++) {
                if (Double.compare(row[i], jackson[i][k]) != 0) {
                    throw new IllegalStateException("sample " + k + ", column " + i + ": ours " + row[i] + ", jackson " + jackson[i][k]);
                }
            }
        }
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
