package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.Executor;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.RejectedExecutionException;
import java.util.concurrent.SynchronousQueue;
import java.util.concurrent.ThreadPoolExecutor;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.function.IntFunction;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.Test;

/**
 * {@link CsvLanes} against reading the same body front to back with one {@link CsvRecords} (the
 * reader {@link CsvFastPathTest} holds to jackson-dataformat-csv): the same trace bit for bit, or
 * the same refusal word for word (class, field, line and text), for every body below cut into
 * blocks of every length from 1 byte (shorter than a row: no block has a line feed) to longer than
 * the body, with the helper reading in place, on a real second thread, or refusing every block.
 *
 * <p>The bodies are 30 rows with one change at one of five rows, of each kind that crosses a
 * block's edge differently: refusals of the row itself (cell, count, magnitude, non-ASCII), of the
 * time against the row before (order, kind), of the sample limit, quoted fields (with a line feed
 * inside, one left open to the end), blank lines, CR and CRLF line ends, and a last row with no
 * line end. The body larger than the header's read (64 KB), read by {@link TraceReader} as the
 * intake does, is compared with {@link JacksonCsvOracle}, the outside reference.
 */
class CsvLanesTest {
    private static final String HEADER = CsvFastPathTest.HEADER;
    private static final ModelDocument MODEL = CsvFastPathTest.MODEL;
    private static final int ROWS = 30;
    private static final int[] CHANGED_ROWS = {0, 1, 7, 15, ROWS - 1};
    private static final Limits FEW_SAMPLES = new Limits(25, 64, 16);
    private static final ExecutorService POOL = new ThreadPoolExecutor(0, 2, 5, TimeUnit.SECONDS, new SynchronousQueue<>());
    private static final Executor IN_PLACE = Runnable::run;
    private static final Executor NONE_FREE = task -> {
        throw new RejectedExecutionException("no helper in this test");
    };

    /** One change to row r's text, or to what comes before it; each entry names itself. */
    private record Change(String name, IntFunction<String> row) {
    }

    private static final List<Change> CHANGES = List.of(
            new Change("none", k -> row(k)),
            new Change("blank output", k -> time(k) + ",," + tail(k, 3)),
            new Change("blank input (refused)", k -> time(k) + "," + cells(k, 3) + ","),
            new Change("bad number (refused)", k -> time(k) + ",1x," + tail(k, 3)),
            new Change("a field too many (refused)", k -> row(k) + ",1"),
            new Change("a field too few (refused)", k -> time(k) + "," + cells(k, 3)),
            new Change("time not after the one before (refused)", k -> time(Math.max(0, k - 1)) + "," + cells(k, 4)),
            new Change("RFC 3339 time among numbers (refused)", k -> "2026-07-01T00:00:00Z," + cells(k, 4)),
            new Change("quoted cell", k -> time(k) + ",\"1.5\"," + tail(k, 3)),
            new Change("quoted cell holding a line feed (refused)", k -> time(k) + ",\"1\n5\"," + tail(k, 3)),
            new Change("quoted cell ending in a line feed", k -> time(k) + ",\"1.5\n\"," + tail(k, 3)),
            new Change("quote left open to the end (refused)", k -> time(k) + ",\"1.5," + tail(k, 3)),
            new Change("blank lines before the row", k -> "\n\r\n" + row(k)),
            new Change("CR line end before the row", k -> "\r" + row(k)),
            new Change("CRLF line end before the row", k -> "\r\n" + row(k)),
            new Change("beyond the magnitude limit (refused)", k -> time(k) + ",1e16," + tail(k, 3)),
            new Change("cell with blanks around it", k -> time(k) + ", 1.5 ," + tail(k, 3)),
            new Change("time with a fraction", k -> (60 * k + 0.25) + "," + cells(k, 4)),
            new Change("non-ASCII cell (refused)", k -> time(k) + ",1\u00b75," + tail(k, 3)));

    @AfterAll
    static void stopPool() {
        POOL.shutdownNow();
    }

    @Test
    void every_body_reads_in_blocks_as_it_reads_front_to_back() {
        int compared = 0;
        for (Change change : CHANGES) {
            for (int changed : CHANGED_ROWS) {
                for (boolean lineEndAtEnd : new boolean[] {true, false}) {
                    byte[] body = body(change, changed, lineEndAtEnd);
                    for (Limits limits : new Limits[] {Limits.DEFAULTS, FEW_SAMPLES}) {
                        String expected = frontToBack(body, limits);
                        String what = change.name() + " at row " + changed + (lineEndAtEnd ? "" : ", no last line end")
                                + ", limit " + limits.maxSamples();
                        compared += compareInBlocks(body, limits, expected, what);
                    }
                }
            }
        }
        assertTrue(compared > 100_000, "compared " + compared + " readings");
    }

    @Test
    void the_changes_cover_both_answers_and_each_refusal() {
        List<String> refused = new ArrayList<>();
        for (Change change : CHANGES) {
            String answer = frontToBack(body(change, 15, true), Limits.DEFAULTS);
            assertEquals(change.name().endsWith("(refused)"), !answer.startsWith("read"), change.name() + ": " + answer);
            if (!answer.startsWith("read")) {
                refused.add(answer);
            }
        }
        assertEquals(refused.size(), refused.stream().distinct().count(), "each refusal is its own: " + refused);
        assertTrue(frontToBack(body(CHANGES.get(0), 0, true), FEW_SAMPLES).contains("got more than 25 samples"),
                "the small limit refuses the trace");
    }

    @Test
    void the_helper_reads_blocks_on_its_own_thread() {
        AtomicInteger handed = new AtomicInteger();
        Executor counting = task -> {
            handed.incrementAndGet();
            POOL.execute(task);
        };
        byte[] body = body(CHANGES.get(0), 0, true);
        assertEquals(frontToBack(body, Limits.DEFAULTS), inBlocks(body, HEADER.length(), 64, counting, Limits.DEFAULTS));
        assertTrue(handed.get() >= 4, "blocks handed over: " + handed.get());
    }

    @Test
    void a_body_larger_than_the_header_read_reads_as_jackson_reads_it_and_refuses_where_it_does() throws IOException {
        StringBuilder csv = new StringBuilder(HEADER);
        for (int k = 0; k < 60_000; k++) {
            csv.append(row(k)).append(k % 1000 == 999 ? "\r\n" : "\n");
        }
        byte[] body = csv.toString().getBytes(StandardCharsets.UTF_8);
        assertTrue(body.length > 4 * CsvLanes.BLOCK_BYTES, "the body spans blocks: " + body.length + " bytes");
        assertEquals(CsvFastPathTest.outcome(() -> JacksonCsvOracle.readCsv(body, MODEL, Limits.DEFAULTS)),
                CsvFastPathTest.outcome(() -> new TraceReader(Limits.DEFAULTS).readCsv(new ByteArrayInputStream(body), MODEL,
                        TraceOptions.NONE)));
        String late = csv.toString().replace("\n" + row(41_234) + "\n", "\n" + time(41_234) + ",oops," + tail(41_234, 3) + "\n");
        InputException refused = org.junit.jupiter.api.Assertions.assertThrows(InputException.class,
                () -> new TraceReader(Limits.DEFAULTS).readCsv(new ByteArrayInputStream(late.getBytes(StandardCharsets.UTF_8)),
                        MODEL, TraceOptions.NONE));
        assertEquals("line 41236, column return_air", refused.field(), "header, then rows 0 to 41 234: its line");
    }

    @Test
    void a_body_delivered_a_few_bytes_a_read_reads_as_it_reads_delivered_whole() throws IOException {
        for (int rows : new int[] {ROWS, 60_000}) {
            StringBuilder csv = new StringBuilder(HEADER);
            for (int k = 0; k < rows; k++) {
                csv.append(row(k)).append('\n');
            }
            byte[] body = csv.toString().getBytes(StandardCharsets.UTF_8);
            TraceReader reader = new TraceReader(Limits.DEFAULTS);
            assertEquals(CsvFastPathTest.outcome(() -> reader.readCsv(new ByteArrayInputStream(body), MODEL, TraceOptions.NONE)),
                    CsvFastPathTest.outcome(() -> reader.readCsv(sevenBytesARead(body), MODEL, TraceOptions.NONE)), rows + " rows");
        }
    }

    /** Hands out at most 7 bytes a read, as a network stream may. */
    private static InputStream sevenBytesARead(byte[] body) {
        return new ByteArrayInputStream(body) {
            @Override
            public synchronized int read(byte[] b, int off, int len) {
                return super.read(b, off, Math.min(len, 7));
            }
        };
    }

    /** Compares every block length, header cut and helper with {@code expected}; returns how many readings. */
    private static int compareInBlocks(byte[] body, Limits limits, String expected, String what) {
        int count = 0;
        for (int cut : new int[] {HEADER.length(), HEADER.length() + 13}) {
            for (int block = 1; block <= 100; block++) {
                assertEquals(expected, inBlocks(body, cut, block, IN_PLACE, limits), what + ", blocks of " + block + ", cut " + cut);
                assertEquals(expected, inBlocks(body, cut, block, NONE_FREE, limits), what + ", blocks of " + block + ", no helper");
                count += 2;
            }
            for (int block : new int[] {24, 31, 47, 64, 150, 400, 4000}) {
                assertEquals(expected, inBlocks(body, cut, block, POOL, limits), what + ", blocks of " + block + ", helper thread");
                count++;
            }
        }
        return count;
    }

    /**
     * The body's rows read in blocks: the header read from its first {@code cut} bytes (so the
     * bytes after the header up to the cut are the first block's start), the rest from a stream.
     */
    private static String inBlocks(byte[] body, int cut, int blockBytes, Executor helpers, Limits limits) {
        return described(() -> {
            TraceColumns columns = new TraceColumns(MODEL, limits);
            int maxFields = 1 + MODEL.outputs().size() + MODEL.inputsOrEmpty().size();
            CsvRecords records = new CsvRecords(new ByteArrayInputStream(body, 0, cut), maxFields + TraceReader.EXTRA_HEADER_FIELDS,
                    maxFields);
            records.next();
            TraceReader.CsvHeader layout = TraceReader.headerTargets(records.texts(), columns, maxFields);
            InputStream rest = new ByteArrayInputStream(body, cut, body.length - cut);
            CsvLanes.readRest(records, rest, layout.rows(), columns.times(), layout.channels(), limits.maxSamples(), blockBytes, helpers);
            return columns.finish(TraceOptions.NONE).assemble();
        });
    }

    /** The body read front to back by one {@link CsvRecords}, as the intake reads a body that fits its first read. */
    private static String frontToBack(byte[] body, Limits limits) {
        return described(() -> CsvFastPathTest.frontToBack(body, limits, CsvRecords.BLOCK_BYTES));
    }

    /** The trace as bits, or the refusal as class and words. */
    private static String described(CsvFastPathTest.Read read) {
        try {
            return CsvFastPathTest.described(read);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    private static byte[] body(Change change, int changed, boolean lineEndAtEnd) {
        StringBuilder csv = new StringBuilder(HEADER);
        for (int k = 0; k < ROWS; k++) {
            csv.append(k == changed ? change.row().apply(k) : row(k));
            if (k < ROWS - 1 || lineEndAtEnd) {
                csv.append('\n');
            }
        }
        return csv.toString().getBytes(StandardCharsets.UTF_8);
    }

    private static String row(int k) {
        return time(k) + "," + cells(k, 4);
    }

    private static String time(int k) {
        return Integer.toString(60 * k);
    }

    /** The first n channel cells of row k. */
    private static String cells(int k, int n) {
        String[] all = {
            String.format(Locale.ROOT, "%.3f", 3.5 - 0.01 * k),
            String.format(Locale.ROOT, "%.3f", -0.25 * (k % 7)),
            String.format(Locale.ROOT, "%.2f", 6 + 0.01 * k),
            String.format(Locale.ROOT, "%.2f", 31.5 + 0.02 * (k % 5))};
        return String.join(",", java.util.Arrays.copyOf(all, n));
    }

    /** The last n channel cells of row k. */
    private static String tail(int k, int n) {
        String[] all = cells(k, 4).split(",");
        return String.join(",", java.util.Arrays.copyOfRange(all, 4 - n, 4));
    }
}
