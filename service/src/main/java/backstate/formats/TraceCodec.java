package backstate.formats;

import backstate.estimation.Trace;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.ByteArrayInputStream;
import java.io.ByteArrayOutputStream;
import java.io.DataInputStream;
import java.io.DataOutputStream;
import java.io.EOFException;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.BufferUnderflowException;
import java.nio.ByteBuffer;

/**
 * Binary storage form of a parsed trace: a version byte, sizes, then the primitive columns as
 * big-endian doubles and the options as JSON. Compact and exact (no decimal round trip).
 */
public final class TraceCodec {
    private static final int FORMAT_VERSION = 1;
    /** Version byte, then n, p and m as ints. */
    private static final int HEADER_BYTES = 1 + 3 * Integer.BYTES;

    private final ObjectMapper mapper;

    public TraceCodec(ObjectMapper mapper) {
        this.mapper = mapper;
    }

    public byte[] encode(ParsedTrace parsed) {
        Trace t = parsed.trace();
        int n = t.samples();
        int p = t.outputCount();
        int m = t.inputCount();
        byte[] options = utf(parsed.options());
        // One ByteBuffer (big-endian, as DataOutputStream wrote) instead of a stream call per
        // double: a 10⁶-sample trace is 40 MB, and the per-call path cost a quarter second.
        ByteBuffer out = ByteBuffer.allocate(HEADER_BYTES + Double.BYTES * (n * (1 + p + m) + p) + options.length);
        out.put((byte) FORMAT_VERSION).putInt(n).putInt(p).putInt(m);
        for (int k = 0; k < n; k++) {
            out.putDouble(t.time(k));
            for (int j = 0; j < p; j++) {
                out.putDouble(t.output(k, j));
            }
            for (int i = 0; i < m; i++) {
                out.putDouble(t.input(k, i));
            }
        }
        for (int j = 0; j < p; j++) {
            out.putDouble(t.noiseSigma(j));
        }
        return out.put(options).array();
    }

    public ParsedTrace decode(byte[] payload) {
        try {
            ByteBuffer in = ByteBuffer.wrap(payload);
            int version = in.get();
            if (version != FORMAT_VERSION) {
                throw new IllegalStateException("stored trace format " + version + ", expected " + FORMAT_VERSION);
            }
            int n = in.getInt();
            int p = in.getInt();
            int m = in.getInt();
            double[] times = new double[n];
            double[] y = new double[n * p];
            double[] u = new double[n * m];
            for (int k = 0; k < n; k++) {
                times[k] = in.getDouble();
                for (int j = 0; j < p; j++) {
                    y[k * p + j] = in.getDouble();
                }
                for (int i = 0; i < m; i++) {
                    u[k * m + i] = in.getDouble();
                }
            }
            double[] sigma = new double[p];
            boolean anySigma = false;
            for (int j = 0; j < p; j++) {
                sigma[j] = in.getDouble();
                anySigma |= !Double.isNaN(sigma[j]);
            }
            DataInputStream rest = new DataInputStream(new ByteArrayInputStream(payload, in.position(), in.remaining()));
            TraceOptions options = mapper.readValue(rest.readUTF(), TraceOptions.class);
            return new ParsedTrace(new Trace(times, y, u, p, m, anySigma ? sigma : null), options);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        } catch (BufferUnderflowException e) {
            throw new UncheckedIOException(new EOFException("stored trace payload ends early"));
        }
    }

    /** The options as DataOutputStream.writeUTF writes them (2-byte length, modified UTF-8). */
    private byte[] utf(TraceOptions options) {
        ByteArrayOutputStream bytes = new ByteArrayOutputStream();
        try (DataOutputStream out = new DataOutputStream(bytes)) {
            out.writeUTF(mapper.writeValueAsString(options));
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        return bytes.toByteArray();
    }
}
