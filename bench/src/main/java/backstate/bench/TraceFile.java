package backstate.bench;

import backstate.estimation.Matrices;
import backstate.estimation.StateSpaceModel;
import backstate.estimation.Trace;
import java.io.IOException;
import java.nio.ByteOrder;
import java.nio.DoubleBuffer;
import java.nio.MappedByteBuffer;
import java.nio.channels.FileChannel;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.nio.file.StandardOpenOption;
import java.util.Arrays;

/**
 * The benchmark trace file written by {@code bench/make_trace.py}: a continuous model, the true x0,
 * and a uniformly sampled trace (format in that script's docstring; little-endian, row-major).
 *
 * <p>The file is memory-mapped, so reading it costs no heap beyond the arrays kept: under a small
 * {@code -Xmx} the heap holds the trace and the solve's working set, nothing else.
 */
final class TraceFile {
    static final String MAGIC = "BSTRACE1";
    private static final int HEADER_BYTES = 32;

    final StateSpaceModel model;
    final double[] noiseSigma;
    final double[] x0True;
    private final int outputs;
    private final int inputs;
    private final double[] times;
    private final double[] values;
    private final double[] held;

    private TraceFile(DoubleBuffer in, int n, int p, int m, int samples) {
        in.get();   // the sample period; the times carry it
        double[][] a = read(in, n, n);
        double[][] b = read(in, n, m);
        double[][] c = read(in, p, n);
        double[][] d = read(in, p, m);
        this.noiseSigma = read(in, p);
        this.x0True = read(in, n);
        this.model = StateSpaceModel.continuous(a, b, c, d, noiseSigma);
        this.outputs = p;
        this.inputs = m;
        this.times = read(in, samples);
        this.values = read(in, samples * p);
        this.held = read(in, samples * m);
    }

    static TraceFile read(Path path) throws IOException {
        try (FileChannel channel = FileChannel.open(path, StandardOpenOption.READ)) {
            MappedByteBuffer map = channel.map(FileChannel.MapMode.READ_ONLY, 0, channel.size());
            map.order(ByteOrder.LITTLE_ENDIAN);
            byte[] magic = new byte[MAGIC.length()];
            map.get(magic);
            if (!MAGIC.equals(new String(magic, StandardCharsets.US_ASCII))) {
                throw new IOException(path + ": got a file without the " + MAGIC + " header");
            }
            int n = map.getInt();
            int p = map.getInt();
            int m = map.getInt();
            map.getInt();
            long samples = map.getLong();
            if (samples > Integer.MAX_VALUE / Math.max(p, m)) {
                throw new IOException(path + ": got " + samples + " samples, expected at most "
                        + Integer.MAX_VALUE / Math.max(p, m));
            }
            return new TraceFile(map.position(HEADER_BYTES).asDoubleBuffer(), n, p, m, (int) samples);
        }
    }

    int samples() {
        return times.length;
    }

    /** The first {@code samples} samples as a trace, with the file's noise σ given per channel. */
    Trace prefix(int samples) {
        if (samples < 1 || samples > times.length) {
            throw new IllegalArgumentException("got " + samples + " samples, expected 1.." + times.length);
        }
        return new Trace(Arrays.copyOf(times, samples), Arrays.copyOf(values, samples * outputs),
                Arrays.copyOf(held, samples * inputs), outputs, inputs, noiseSigma.clone());
    }

    private static double[] read(DoubleBuffer in, int count) {
        double[] out = new double[count];
        in.get(out);
        return out;
    }

    private static double[][] read(DoubleBuffer in, int rows, int cols) {
        return Matrices.unflatten(read(in, rows * cols), rows, cols);
    }
}
