package backstate.formats;

import backstate.estimation.Trace;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.ByteArrayInputStream;
import java.io.ByteArrayOutputStream;
import java.io.DataInputStream;
import java.io.DataOutputStream;
import java.io.IOException;
import java.io.UncheckedIOException;

/**
 * Binary storage form of a parsed trace: a version byte, sizes, then the primitive columns as
 * big-endian doubles and the options as JSON. Compact and exact (no decimal round trip).
 */
public final class TraceCodec {
    private static final int FORMAT_VERSION = 1;

    private final ObjectMapper mapper;

    public TraceCodec(ObjectMapper mapper) {
        this.mapper = mapper;
    }

    public byte[] encode(ParsedTrace parsed) {
        Trace t = parsed.trace();
        int n = t.samples();
        int p = t.outputCount();
        int m = t.inputCount();
        ByteArrayOutputStream bytes = new ByteArrayOutputStream(16 + 8 * n * (1 + p + m));
        try (DataOutputStream out = new DataOutputStream(bytes)) {
            out.writeByte(FORMAT_VERSION);
            out.writeInt(n);
            out.writeInt(p);
            out.writeInt(m);
            for (int k = 0; k < n; k++) {
                out.writeDouble(t.time(k));
                for (int j = 0; j < p; j++) {
                    out.writeDouble(t.output(k, j));
                }
                for (int i = 0; i < m; i++) {
                    out.writeDouble(t.input(k, i));
                }
            }
            for (int j = 0; j < p; j++) {
                out.writeDouble(t.noiseSigma(j));
            }
            out.writeUTF(mapper.writeValueAsString(parsed.options()));
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        return bytes.toByteArray();
    }

    public ParsedTrace decode(byte[] payload) {
        try (DataInputStream in = new DataInputStream(new ByteArrayInputStream(payload))) {
            int version = in.readByte();
            if (version != FORMAT_VERSION) {
                throw new IllegalStateException("stored trace format " + version + ", expected " + FORMAT_VERSION);
            }
            int n = in.readInt();
            int p = in.readInt();
            int m = in.readInt();
            double[] times = new double[n];
            double[] y = new double[n * p];
            double[] u = new double[n * m];
            for (int k = 0; k < n; k++) {
                times[k] = in.readDouble();
                for (int j = 0; j < p; j++) {
                    y[k * p + j] = in.readDouble();
                }
                for (int i = 0; i < m; i++) {
                    u[k * m + i] = in.readDouble();
                }
            }
            double[] sigma = new double[p];
            boolean anySigma = false;
            for (int j = 0; j < p; j++) {
                sigma[j] = in.readDouble();
                anySigma |= !Double.isNaN(sigma[j]);
            }
            TraceOptions options = mapper.readValue(in.readUTF(), TraceOptions.class);
            return new ParsedTrace(new Trace(times, y, u, p, m, anySigma ? sigma : null), options);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
