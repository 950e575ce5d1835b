package backstate.formats;

/**
 * A growable column of primitive doubles (no boxing), capped at a sample limit, held in segments
 * of {@value #SEGMENT} values: growing copies only the first segment, which starts at
 * {@value #FIRST_LENGTH} values and doubles until it is whole (a trace of a thousand samples
 * takes 8 KB a column, not 128 KB), a column holds at most one part-filled segment beyond its
 * values, and no segment is large enough to be a "humongous" object for G1 (half a heap region:
 * 512 KB in heaps up to 2 GB), which would be allocated outside the young generation and waste up
 * to half a region each. Every segment but the last is whole.
 */
final class DoubleColumn {
    /** log2 of the segment length. */
    static final int SEGMENT_BITS = 14;
    /** Values a segment: 16 384, 128 KB. */
    static final int SEGMENT = 1 << SEGMENT_BITS;
    private static final int MASK = SEGMENT - 1;
    private static final int INITIAL_SEGMENTS = 4;
    /** Length of the first segment when it is made: the common trace fits it. */
    static final int FIRST_LENGTH = 1024;

    private final String field;
    private final int limit;
    private double[][] segments = new double[INITIAL_SEGMENTS][];
    private double[] current;
    private int size;
    /** The size at which {@code current} is full or the limit is reached: {@link #add} then makes room or refuses. */
    private int room;

    DoubleColumn(String field, int limit) {
        this.field = field;
        this.limit = limit;
    }

    void add(double v) {
        if (size == room) {
            makeRoom();
        }
        current[size & MASK] = v;
        size++;
    }

    /** Grows the first segment, or starts the next one; refuses a value past the limit. */
    private void makeRoom() {
        if (size == limit) {
            throw new InputException(field, "got more than " + limit + " samples, expected at most " + limit);
        }
        int index = size >>> SEGMENT_BITS;
        int at = size & MASK;
        if (at > 0) {
            current = java.util.Arrays.copyOf(current, Math.min(2 * current.length, SEGMENT));
        } else {
            if (index == segments.length) {
                segments = java.util.Arrays.copyOf(segments, segments.length * 2);
            }
            current = new double[index == 0 ? FIRST_LENGTH : SEGMENT];
        }
        segments[index] = current;
        room = (int) Math.min(limit, (long) size - at + current.length);
    }

    int size() {
        return size;
    }

    /** Most values the column takes. */
    int limit() {
        return limit;
    }

    /**
     * Drops the values from index n on. The segments holding values before n are kept (and the
     * first segment when n is 0), so the next values are written into them again.
     */
    void truncate(int n) {
        if (n >= size) {
            return;
        }
        int kept = Math.max(1, (n + SEGMENT - 1) >>> SEGMENT_BITS);
        for (int s = kept; s < segments.length; s++) {
            segments[s] = null;
        }
        size = n;
        current = segments[kept - 1];
        room = (int) Math.min(limit, (long) (kept - 1) * SEGMENT + current.length);
    }

    /** Appends every value of {@code more}, as {@link #add} would one by one, a run at a time. */
    void addAll(DoubleColumn more) {
        int copied = 0;
        while (copied < more.size) {
            if (size == room) {
                makeRoom();
            }
            int from = copied & MASK;
            int run = Math.min(Math.min(room - size, more.size - copied), SEGMENT - from);
            System.arraycopy(more.segments[copied >>> SEGMENT_BITS], from, current, size & MASK, run);
            size += run;
            copied += run;
        }
    }

    double get(int i) {
        return segments[i >>> SEGMENT_BITS][i & MASK];
    }

    String field() {
        return field;
    }

    /** The segments in order; values k is {@code segments()[k >>> SEGMENT_BITS][k & (SEGMENT - 1)]}, for k below {@link #size()}. */
    double[][] segments() {
        return segments;
    }

    /**
     * The segments, as {@link #segments()}, handed over: the column is empty after, so a caller
     * that writes the values elsewhere holds them only as long as it needs them.
     */
    double[][] takeSegments() {
        double[][] taken = segments;
        clear();
        return taken;
    }

    /**
     * Moves n values of every column into the row-major {@code out}: value k of column j to
     * {@code out[k * columns.length + j]}, NaN for a null column. It goes a segment of all columns
     * at a time, so each stretch of {@code out} is written while it is in cache, instead of once
     * a column across the whole array; each segment is let go of once copied and the columns are
     * empty after.
     */
    static void interleave(DoubleColumn[] columns, int n, double[] out) {
        int width = columns.length;
        for (DoubleColumn column : columns) {
            if (column != null && column.size != n) {
                throw new IllegalStateException("got a column of " + column.size + " values, expected " + n);
            }
        }
        for (int s = 0; s * SEGMENT < n; s++) {
            for (int j = 0; j < width; j++) {
                if (columns[j] != null) {
                    columns[j].moveSegment(s, out, j, width);
                } else {
                    for (int k = s * SEGMENT, end = Math.min(n, k + SEGMENT); k < end; k++) {
                        out[k * width + j] = Double.NaN;
                    }
                }
            }
        }
        for (DoubleColumn column : columns) {
            if (column != null) {
                column.clear();
            }
        }
    }

    /** Segment s's values to {@code out[at + k * stride]} for their indices k, then lets go of it. */
    private void moveSegment(int s, double[] out, int at, int stride) {
        double[] segment = segments[s];
        segments[s] = null;
        int from = s * SEGMENT;
        int count = Math.min(SEGMENT, size - from);
        for (int i = 0, o = at + from * stride; i < count; i++, o += stride) {
            out[o] = segment[i];
        }
    }

    private void clear() {
        segments = new double[INITIAL_SEGMENTS][];
        current = null;
        size = 0;
        room = 0;
    }
}
