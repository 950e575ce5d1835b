package backstate.formats;

import backstate.estimation.Trace;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.ByteArrayInputStream;
import java.io.DataInputStream;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.ByteBuffer;

/**
 * The format-1 encoder and decoder as {@link TraceCodec} had them at commit 0226436 (row by row,
 * big-endian doubles), kept only so tests can make format-1 bytes (stored rows from before format 2
 * hold them, and {@link TraceCodec#decode} must go on reading them) and the codec bench can time
 * the decoder that format 2 replaces.
 */
final class TraceCodecV1Oracle {
    private TraceCodecV1Oracle() {
    }

    static byte[] encode(TraceCodec codec, ParsedTrace parsed) {
        Trace t = parsed.trace();
        int n = t.samples();
        int p = t.outputCount();
        int m = t.inputCount();
        byte[] options = codec.utf(parsed.options());
        ByteBuffer out = ByteBuffer.allocate(TraceCodec.HEADER_BYTES + Double.BYTES * (n * (1 + p + m) + p) + options.length);
        out.put((byte) TraceCodec.ROWS_FORMAT).putInt(n).putInt(p).putInt(m);
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

    /** The old decoder, minus its error handling (the bench feeds it good bytes only). */
    static ParsedTrace decode(ObjectMapper mapper, byte[] payload) {
        ByteBuffer in = ByteBuffer.wrap(payload);
        in.get();
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
        try {
            DataInputStream rest = new DataInputStream(new ByteArrayInputStream(payload, in.position(), in.remaining()));
            TraceOptions options = mapper.readValue(rest.readUTF(), TraceOptions.class);
            return new ParsedTrace(new Trace(times, y, u, p, m, anySigma ? sigma : null), options);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
