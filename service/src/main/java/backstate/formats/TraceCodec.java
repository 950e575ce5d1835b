package backstate.formats;

import backstate.estimation.Trace;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.ByteArrayInputStream;
import java.io.ByteArrayOutputStream;
import java.io.DataInputStream;
import java.io.DataOutputStream;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.util.function.Consumer;
import java.util.function.IntToDoubleFunction;

/**
 * Binary storage form of a parsed trace, exact bit for bit (NaN stays NaN). Layout: a format byte,
 * n, p and m as big-endian ints, the samples, the p noise σ as big-endian doubles (NaN: not given),
 * then the options as JSON in {@code DataOutputStream.writeUTF} form.
 *
 * <p>The samples, format 2 (the one written): {@link ColumnarSamples}, column by column — time, each
 * output, each input — each a {@link StoredColumn}: decimal-delta (a few bits to about 1.5 bytes a
 * value for decimals read from text) or raw doubles. Format 1 (read, never written; older stored
 * rows hold it): row by row, time then the p outputs then the m inputs, each an 8-byte big-endian
 * double.
 */
public final class TraceCodec {
    /** Row-wise doubles; read, never written. */
    static final int ROWS_FORMAT = 1;
    /** Column-wise, decimal-delta or raw per column. */
    static final int COLUMNS_FORMAT = 2;
    /** Format byte, then n, p and m as ints. */
    static final int HEADER_BYTES = 1 + 3 * Integer.BYTES;
    /** The length prefix of {@code writeUTF}: the options take at least this much. */
    private static final int OPTIONS_MIN_BYTES = Short.BYTES;

    private final ObjectMapper mapper;

    public TraceCodec(ObjectMapper mapper) {
        this.mapper = mapper;
    }

    /** Format 2; see the class comment. */
    public byte[] encode(ParsedTrace parsed) {
        Trace t = parsed.trace();
        return encode(t.samples(), t.outputCount(), t.inputCount(), out -> ColumnarSamples.write(out, t), t::noiseSigma,
                parsed.options());
    }

    /**
     * Format 2 straight from the columns as read, the same bytes as {@link #encode(ParsedTrace)} of
     * the assembled trace: no row-major copy of the samples is made, and each channel's column is
     * let go of once written, so {@code parsed} holds only its times after (it cannot be assembled).
     */
    public byte[] encode(ParsedColumns parsed) {
        return encode(parsed.samples(), parsed.outputCount(), parsed.inputCount(), out -> ColumnarSamples.write(out, parsed),
                parsed::noiseSigma, parsed.options());
    }

    private byte[] encode(int n, int p, int m, Consumer<ByteSink> samples, IntToDoubleFunction noiseSigma,
                          TraceOptions traceOptions) {
        byte[] options = utf(traceOptions);
        // Room for 2 bytes a value, more than decimal-delta needs; the sink grows if columns go raw.
        long guess = HEADER_BYTES + 2L * n * (1 + p + m) + (long) Double.BYTES * p + options.length;
        ByteSink out = new ByteSink((int) Math.min(guess, Integer.MAX_VALUE / 2));
        out.put(COLUMNS_FORMAT);
        out.putInt(n);
        out.putInt(p);
        out.putInt(m);
        samples.accept(out);
        for (int j = 0; j < p; j++) {
            out.putDouble(noiseSigma.applyAsDouble(j));
        }
        out.putBytes(options);
        return out.toByteArray();
    }

    /**
     * Reads format 1 or 2. Bad or truncated bytes throw {@link IllegalStateException} or
     * {@link UncheckedIOException}; the sizes in the header are checked against the bytes left
     * before any array is allocated.
     */
    public ParsedTrace decode(byte[] payload) {
        ByteSource in = new ByteSource(payload);
        int format = in.get();
        if (format != ROWS_FORMAT && format != COLUMNS_FORMAT) {
            throw new IllegalStateException("stored trace format " + format + ", expected " + ROWS_FORMAT + " or " + COLUMNS_FORMAT);
        }
        int n = in.getInt();
        int p = in.getInt();
        int m = in.getInt();
        checkSizes(format, n, p, m, in.remaining());
        double[] times = new double[n];
        double[] y = new double[n * p];
        double[] u = new double[n * m];
        if (format == ROWS_FORMAT) {
            readRows(in, times, y, u, p, m);
        } else {
            ColumnarSamples.read(in, times, y, p, u, m);
        }
        double[] sigma = new double[p];
        boolean anySigma = false;
        for (int j = 0; j < p; j++) {
            sigma[j] = in.getDouble();
            anySigma |= !Double.isNaN(sigma[j]);
        }
        TraceOptions options = readOptions(payload, in.position());
        try {
            return new ParsedTrace(new Trace(times, y, u, p, m, anySigma ? sigma : null), options);
        } catch (IllegalArgumentException e) {
            throw new IllegalStateException("stored trace is not a valid trace: " + e.getMessage(), e);
        }
    }

    /**
     * Every sample of every column costs at least 8 bytes in format 1 and 1 bit (plus a kind byte
     * and a length a column) in format 2, so a header asking for more than the payload holds is
     * refused before it can ask for gigabytes: the arrays allocated are at most 64 times the payload.
     */
    private static void checkSizes(int format, int n, int p, int m, int remaining) {
        long columns = 1L + p + m;
        long values = (long) n * columns;
        boolean fits = n >= 1 && p >= 0 && m >= 0 && values <= (long) Byte.SIZE * remaining;
        long needed = 0;
        if (fits) {
            needed = format == ROWS_FORMAT ? values * Double.BYTES : (values + Byte.SIZE - 1) / Byte.SIZE + columns * StoredColumn.HEADER_BYTES;
            needed += (long) Double.BYTES * p + OPTIONS_MIN_BYTES;
            fits = needed <= remaining;
        }
        if (!fits) {
            throw new IllegalStateException("stored trace header: got n = " + n + ", p = " + p + ", m = " + m + " with "
                    + remaining + " bytes left, expected n ≥ 1, p ≥ 0, m ≥ 0 and "
                    + (needed > 0 ? needed + " bytes or more" : "at least one bit a value"));
        }
    }

    /** Format 1: per sample the time, the p outputs and the m inputs (length checked once, by the claim). */
    private static void readRows(ByteSource in, double[] times, double[] y, double[] u, int p, int m) {
        int at = in.take(Double.BYTES * (times.length + y.length + u.length));
        for (int k = 0; k < times.length; k++) {
            times[k] = in.doubleAt(at);
            at += Double.BYTES;
            for (int j = 0; j < p; j++, at += Double.BYTES) {
                y[k * p + j] = in.doubleAt(at);
            }
            for (int i = 0; i < m; i++, at += Double.BYTES) {
                u[k * m + i] = in.doubleAt(at);
            }
        }
    }

    private TraceOptions readOptions(byte[] payload, int from) {
        try {
            DataInputStream rest = new DataInputStream(new ByteArrayInputStream(payload, from, payload.length - from));
            String json = rest.readUTF();
            if (rest.available() != 0) {
                throw new IllegalStateException("stored trace: got " + rest.available() + " bytes after the options, expected none");
            }
            return mapper.readValue(json, TraceOptions.class);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /** The options as DataOutputStream.writeUTF writes them (2-byte length, modified UTF-8). */
    byte[] utf(TraceOptions options) {
        ByteArrayOutputStream bytes = new ByteArrayOutputStream();
        try (DataOutputStream out = new DataOutputStream(bytes)) {
            out.writeUTF(mapper.writeValueAsString(options));
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        return bytes.toByteArray();
    }
}
