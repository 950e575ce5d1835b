package backstate.formats;

import backstate.estimation.Trace;

/**
 * The samples of a stored trace in format 2: the time column, each output column, each input
 * column, one {@link StoredColumn} each. Read back a block of rows at a time from all columns at
 * once, so each of the trace's row-major arrays is written once, front to back (filling one column
 * at a time would pass over the whole output array once per channel, at 8·p bytes a stride; on the
 * 10⁶-sample bench that cost several milliseconds more).
 */
final class ColumnarSamples {
    private ColumnarSamples() {
    }

    static void write(ByteSink out, Trace t) {
        int n = t.samples();
        double[] column = new double[n];
        long[] mantissas = new long[n];
        for (int k = 0; k < n; k++) {
            column[k] = t.time(k);
        }
        StoredColumn.write(out, column, mantissas, n);
        for (int j = 0; j < t.outputCount(); j++) {
            for (int k = 0; k < n; k++) {
                column[k] = t.output(k, j);
            }
            StoredColumn.write(out, column, mantissas, n);
        }
        for (int i = 0; i < t.inputCount(); i++) {
            for (int k = 0; k < n; k++) {
                column[k] = t.input(k, i);
            }
            StoredColumn.write(out, column, mantissas, n);
        }
    }

    /**
     * The same bytes as {@link #write(ByteSink, Trace)} of the assembled trace, read from the columns
     * where they lie; each channel column is handed over as it is written ({@link DoubleColumn#takeSegments}),
     * so the columns shrink while the payload grows.
     */
    static void write(ByteSink out, ParsedColumns c) {
        int n = c.samples();
        long[] mantissas = new long[n];
        StoredColumn.write(out, new double[][] {c.timesView()}, mantissas, n);
        for (int j = 0; j < c.outputCount(); j++) {
            DoubleColumn column = c.output(j);
            StoredColumn.write(out, column == null ? allMissing(n) : column.takeSegments(), mantissas, n);
        }
        for (int i = 0; i < c.inputCount(); i++) {
            StoredColumn.write(out, c.input(i).takeSegments(), mantissas, n);
        }
    }

    /** Segments of n missing values: one segment of NaN, shared. */
    private static double[][] allMissing(int n) {
        double[] missing = new double[Math.min(n, DoubleColumn.SEGMENT)];
        java.util.Arrays.fill(missing, Double.NaN);
        double[][] segments = new double[(n + missing.length - 1) / missing.length][];
        java.util.Arrays.fill(segments, missing);
        return segments;
    }

    /** Fills {@code times} (n), {@code y} (n×p) and {@code u} (n×m), row-major, a block of rows at a time. */
    static void read(ByteSource in, double[] times, double[] y, int p, double[] u, int m) {
        int n = times.length;
        StoredColumn.Cursor[] columns = new StoredColumn.Cursor[1 + p + m];
        for (int c = 0; c < columns.length; c++) {
            columns[c] = StoredColumn.open(in);
        }
        for (int from = 0; from < n; from += BitBlocks.BLOCK) {
            int count = Math.min(BitBlocks.BLOCK, n - from);
            columns[0].next(count, times, from, 1, from);
            for (int j = 0; j < p; j++) {
                columns[1 + j].next(count, y, from * p + j, p, from);
            }
            for (int i = 0; i < m; i++) {
                columns[1 + p + i].next(count, u, from * m + i, m, from);
            }
        }
        for (StoredColumn.Cursor column : columns) {
            column.finish();
        }
    }
}
