package backstate.formats;

import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.SequenceInputStream;
import java.util.ArrayDeque;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
import java.util.Deque;
import java.util.List;
import java.util.concurrent.Executor;
import java.util.concurrent.Future;

/**
 * Reads the rows of a large CSV body on two threads. The body is cut into blocks at line feeds and
 * taken two at a time: a helper thread reads the second block of a pair into columns of its own
 * while the calling thread reads the first into the trace's columns, then appends the helper's
 * (one copy) before it reads the next pair's first. Only the time column's kind and order, and
 * the sample limit, cross a block's edge; appending checks them.
 *
 * <p>The answer is the one reading the body front to back gives ({@link CsvRows#readAll} over one
 * {@link CsvRecords}), refusals included, by one rule: a block whose rows fail to read (any
 * refusal, or a quoted field running past its end), or whose first time does not follow the
 * trace's last, is read again with everything after it, front to back from its first line, on the
 * trace as it stood before the block (a block read into the trace's columns is first rolled back).
 * Every block before it read whole records, each ending at a line feed outside quotes, so that
 * reading starts at a record's start and words any refusal with its true line. A full block with
 * no line feed (a body with CR line ends) is read the same way. The helper comes from
 * {@link ParseHelpers}, and a block is never queued for one: when none is free, the calling thread
 * reads the block itself.
 */
final class CsvLanes {
    /**
     * Bytes of the calling thread's block: large enough that handing a block over costs little
     * (about 60 pairs at 10^6 samples), small enough that what is in hand stays small: at most
     * four blocks and the helper's two sets of columns, about 2.5 MB.
     */
    static final int BLOCK_BYTES = 256 * 1024;
    /**
     * The helper's block against the calling thread's: the calling thread also reads the input and
     * appends the helper's rows, so the helper reads more of them (measured at 10^6 samples,
     * bench/load/upload.sh).
     */
    private static final double HELPER_SHARE = 1.25;

    private final InputStream in;
    private final CsvRows rows;
    private final TraceTimes times;
    private final DoubleColumn[] columns;
    private final int blockBytes;
    private final int helperBytes;
    private final Executor helpers;
    /** Two sets of columns for the helper, taken in turn: one is appended while the helper fills the other. */
    private final Lane[] lanes;
    private int nextLane;
    /** Block buffers given back once their rows are in the trace. */
    private final Deque<byte[]> spare = new ArrayDeque<>();
    /** Bytes after the last line feed of the block read last, the start of the next; null once the input is read to its end. */
    private byte[] carry;
    /** Line number of the first line after the rows in the trace. */
    private long line;

    /** One block: whole records in {@code bytes[0, end)}; the last block of the input ends at the input's end. */
    private record Block(byte[] bytes, int end, boolean last, boolean splitAtLineFeed) {
        InputStream stream() {
            return new ByteArrayInputStream(bytes, 0, end);
        }
    }

    /** Columns a helper reads a block into, as the trace's are laid out; reused block after block. */
    private record Lane(TraceTimes times, DoubleColumn[] columns) {
        void clear() {
            times.clear();
            truncate(columns, 0);
        }
    }

    /** A block handed to the helper, and the line count of its rows once read; -1 when they failed to read alone. */
    private record HandedOver(Block block, Lane lane, Future<Long> lines) {
    }

    private CsvLanes(InputStream in, byte[] start, long line, CsvRows rows, TraceTimes times, DoubleColumn[] columns,
                     int limit, int blockBytes, Executor helpers) {
        this.in = in;
        this.carry = start;
        this.line = line;
        this.rows = rows;
        this.times = times;
        this.columns = columns;
        this.blockBytes = blockBytes;
        this.helperBytes = (int) (blockBytes * HELPER_SHARE);
        this.helpers = helpers;
        this.lanes = new Lane[] {new Lane(new TraceTimes(limit), rows.newColumns(limit)),
                new Lane(new TraceTimes(limit), rows.newColumns(limit))};
    }

    /**
     * Reads the rest of the rows, which start with {@code records}' unconsumed bytes and go on in
     * {@code in}, into {@code times} and {@code columns}.
     */
    static void readRest(CsvRecords records, InputStream in, CsvRows rows, TraceTimes times, DoubleColumn[] columns,
                         int limit) throws IOException {
        readRest(records, in, rows, times, columns, limit, BLOCK_BYTES, ParseHelpers.POOL);
    }

    /** {@link #readRest}, with the block length and the helper threads given (tests cut tiny blocks). */
    static void readRest(CsvRecords records, InputStream in, CsvRows rows, TraceTimes times, DoubleColumn[] columns,
                         int limit, int blockBytes, Executor helpers) throws IOException {
        new CsvLanes(in, records.unconsumed(), records.nextLine(), rows, times, columns, limit, blockBytes, helpers).read();
    }

    private void read() throws IOException {
        HandedOver pending = null;
        while (true) {
            Block first = nextBlock(blockBytes);
            Block second = first != null && first.splitAtLineFeed() && !first.last() ? nextBlock(helperBytes) : null;
            long pendingLines = pending == null ? 0 : ParseHelpers.await(pending.lines()); // the helper is free from here
            HandedOver handed = handOver(second);
            if (pending != null) {
                if (pendingLines < 0 || !append(pending.lane(), pendingLines)) {
                    readFrontToBack(pending.block(), first, second);
                    return;
                }
                spare.push(pending.block().bytes());
            }
            pending = handed;
            if (first == null) {
                return;
            }
            if (!readIntoTrace(first)) {
                readFrontToBack(first, second);
                return;
            }
            if (second != null && handed == null && !readIntoTrace(second)) {
                readFrontToBack(second);
                return;
            }
        }
    }

    /** The next block, or null after the last. */
    private Block nextBlock(int length) throws IOException {
        if (carry == null) {
            return null;
        }
        int size = Math.max(length, carry.length + 1);
        byte[] bytes = !spare.isEmpty() && spare.peek().length >= size ? spare.pop() : new byte[Math.max(size, helperBytes)];
        System.arraycopy(carry, 0, bytes, 0, carry.length);
        int filled = carry.length + CsvRecords.readFully(in, bytes, carry.length, size - carry.length);
        if (filled < size) {
            carry = null;
            return filled == 0 ? null : new Block(bytes, filled, true, true);
        }
        int end = filled;
        while (end > 0 && bytes[end - 1] != '\n') {
            end--;
        }
        if (end == 0) {
            carry = new byte[0];
            return new Block(bytes, filled, false, false);
        }
        carry = Arrays.copyOfRange(bytes, end, filled);
        return new Block(bytes, end, false, true);
    }

    /** The block handed to a helper, which reads its rows into the next lane; null when there is no block to hand over or no helper is free. */
    private HandedOver handOver(Block block) {
        if (block == null || !block.splitAtLineFeed()) {
            return null;
        }
        Lane lane = lanes[nextLane];
        Future<Long> lines = ParseHelpers.start(helpers, () -> readAlone(block, lane));
        if (lines == null) {
            return null;
        }
        nextLane ^= 1;
        return new HandedOver(block, lane, lines);
    }

    /** The block's rows read into the lane, as if they were a whole body's; their line count, or -1 on any refusal. */
    private long readAlone(Block block, Lane lane) {
        lane.clear();
        CsvRecords records = new CsvRecords(block.bytes(), 0, block.end(), rows.fieldLimit(), 1);
        try {
            rows.readAll(records, lane.times(), lane.columns());
        } catch (RuntimeException | IOException e) {
            return -1;
        }
        return records.nextLine() - 1;
    }

    /** Reads the block's rows into the trace; false, with the trace rolled back to before the block, on any refusal. */
    private boolean readIntoTrace(Block block) {
        if (!block.splitAtLineFeed()) {
            return false;
        }
        TraceTimes.Mark mark = times.mark();
        CsvRecords records = new CsvRecords(block.bytes(), 0, block.end(), rows.fieldLimit(), line);
        try {
            rows.readAll(records, times, columns);
        } catch (RuntimeException | IOException e) {
            times.rollBack(mark);
            truncate(columns, mark.size());
            return false;
        }
        line = records.nextLine();
        spare.push(block.bytes());
        return true;
    }

    /** Every column (null at the time column) cut back to its first n values. */
    private static void truncate(DoubleColumn[] columns, int n) {
        for (DoubleColumn column : columns) {
            if (column != null) {
                column.truncate(n);
            }
        }
    }

    /** Appends a lane's rows to the trace; false, appending nothing, when they do not follow on. */
    private boolean append(Lane lane, long lines) {
        if (!times.appendAll(lane.times())) {
            return false;
        }
        for (int i = 0; i < columns.length; i++) {
            if (columns[i] != null) {
                columns[i].addAll(lane.columns()[i]);
            }
        }
        line += lines;
        return true;
    }

    /** Reads the blocks given (nulls skipped), then what is left of the input, front to back from {@link #line}. */
    private void readFrontToBack(Block... blocks) throws IOException {
        List<InputStream> parts = new ArrayList<>(blocks.length + 2);
        for (Block block : blocks) {
            if (block != null) {
                parts.add(block.stream());
            }
        }
        if (carry != null) {
            parts.add(new ByteArrayInputStream(carry));
            parts.add(in);
        }
        carry = null;
        rows.readAll(new CsvRecords(new SequenceInputStream(Collections.enumeration(parts)), rows.fieldLimit(), line),
                times, columns);
    }
}
