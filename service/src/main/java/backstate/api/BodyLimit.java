package backstate.api;

import backstate.config.UploadLimits;
import io.javalin.http.Context;
import java.io.FilterInputStream;
import java.io.IOException;
import java.io.InputStream;
import java.util.concurrent.TimeoutException;
import java.util.zip.ZipException;
import org.apache.commons.compress.compressors.gzip.GzipCompressorInputStream;

/**
 * Opens a request body as a stream, decompressing {@code Content-Encoding: gzip}, and answers 413
 * as soon as more than the limit has been read (after decompression, so a small gzip bomb is
 * caught as early as a large plain body). Reading holds an upload permit ({@link Uploads}, 503
 * when none is free) until the stream is closed, and a body that arrives slower than the minimum
 * rate, for longer than the longest body time, or not at all until the connection's idle timeout
 * gets 408.
 */
final class BodyLimit {
    /** A body that ends before its Content-Length or final chunk: the client's fault, not ours. */
    private static final String TRUNCATED_BODY = "the body ended before its declared length (truncated upload or broken chunked encoding)";
    private static final String CORRUPT_GZIP = "the gzip stream is corrupt or truncated";

    private BodyLimit() {
    }

    static InputStream open(Context ctx, long maxBytes) throws IOException {
        String length = ctx.header("Content-Length");
        if (length != null && length.matches("\\d{1,19}") && Long.parseLong(length) > maxBytes) {
            throw ApiProblem.tooLarge(maxBytes);
        }
        Uploads uploads = ctx.appData(Uploads.KEY);
        Uploads.Permit permit = uploads.acquire(ctx);
        try {
            return decoded(ctx, new Capped(new Paced(ctx.bodyInputStream(), uploads.limits(), permit), maxBytes, TRUNCATED_BODY),
                    maxBytes);
        } catch (RuntimeException | IOException e) {
            permit.close();
            throw e;
        }
    }

    private static InputStream decoded(Context ctx, InputStream raw, long maxBytes) throws IOException {
        String encoding = ctx.header("Content-Encoding");
        if (encoding == null || encoding.isBlank() || encoding.equalsIgnoreCase("identity")) {
            return raw;
        }
        if (encoding.equalsIgnoreCase("gzip")) {
            Wire wire = new Wire(raw);
            try {
                return new Capped(new Gunzipped(wire), maxBytes, CORRUPT_GZIP);
            } catch (IOException e) { // not gzip, or too short for its header
                if (wire.failed) {
                    throw e;
                }
                throw ApiProblem.invalid("Content-Encoding", "the body is not valid gzip");
            }
        }
        ctx.header("Accept-Encoding", "gzip, identity");
        throw ApiProblem.unsupportedContentEncoding(encoding, "gzip or identity");
    }

    /**
     * A filter whose single-byte read goes through its block read, so a subclass's counting and
     * checks in {@code read(byte[], int, int)} see every byte however the caller reads.
     */
    private abstract static class BlockReads extends FilterInputStream {
        BlockReads(InputStream in) {
            super(in);
        }

        @Override
        public int read() throws IOException {
            byte[] one = new byte[1];
            int n = read(one, 0, 1);
            return n == 1 ? one[0] & 0xff : -1;
        }
    }

    /**
     * The raw body on the wire: holds the upload permit until closed, and refuses a body that is
     * too slow. The checks run whenever a read returns, and a read that waits longer than the
     * connection's idle timeout fails, so a crawling or silent body is cut within the grace, the
     * longest body time or the idle timeout, whichever comes first.
     */
    private static final class Paced extends BlockReads {
        private final UploadLimits limits;
        private final Uploads.Permit permit;
        private final long start = System.nanoTime();
        private long count;

        Paced(InputStream in, UploadLimits limits, Uploads.Permit permit) {
            super(in);
            this.limits = limits;
            this.permit = permit;
        }

        @Override
        public int read(byte[] buf, int off, int len) throws IOException {
            int n;
            try {
                n = super.read(buf, off, len);
            } catch (IOException e) {
                if (causedByTimeout(e)) {
                    throw ApiProblem.bodyTooSlow("no byte of the body arrived within the connection's idle timeout");
                }
                throw e;
            }
            count += Math.max(n, 0);
            check(n < 0);
            return n;
        }

        private void check(boolean ended) {
            long elapsed = System.nanoTime() - start;
            if (elapsed > limits.maxBodyTime().toNanos()) {
                throw ApiProblem.bodyTooSlow("the body took over " + limits.maxBodyTime().toSeconds()
                        + " s to arrive, the most --max-body-seconds allows");
            }
            if (!ended && elapsed > UploadLimits.RATE_GRACE.toNanos()
                    && count < limits.minBodyRate() * (elapsed / 1e9)) {
                throw ApiProblem.bodyTooSlow("the body arrived at under " + limits.minBodyRate()
                        + " bytes a second, the least --min-body-rate allows");
            }
        }

        @Override
        public void close() throws IOException {
            try {
                super.close();
            } finally {
                permit.close();
            }
        }

        private static boolean causedByTimeout(Throwable e) {
            for (Throwable t = e; t != null; t = t.getCause()) {
                if (t instanceof TimeoutException) {
                    return true;
                }
            }
            return false;
        }
    }

    /** The compressed body as read from the wire, remembering whether reading it failed. */
    private static final class Wire extends BlockReads {
        private boolean failed;

        Wire(InputStream in) {
            super(in);
        }

        @Override
        public int read(byte[] buf, int off, int len) throws IOException {
            try {
                return super.read(buf, off, len);
            } catch (IOException | RuntimeException e) {
                failed = true;
                throw e;
            }
        }
    }

    /**
     * Every gzip member of the body (RFC 1952 §2.2), each checked against its CRC-32 and length; a
     * truncated or damaged member, or bytes after the last one that are no member, is an error
     * ({@code java.util.zip.GZIPInputStream} ends quietly at such bytes, dropping what follows).
     * An error of the decoder's own becomes a {@link ZipException}, one from the wire passes as it is.
     */
    private static final class Gunzipped extends BlockReads {
        private final Wire wire;

        Gunzipped(Wire wire) throws IOException {
            super(null);
            this.wire = wire;
            this.in = decoding(() -> new GzipCompressorInputStream(wire, true));
        }

        @Override
        public int read(byte[] buf, int off, int len) throws IOException {
            return decoding(() -> in.read(buf, off, len));
        }

        private <T> T decoding(IoCall<T> call) throws IOException {
            try {
                return call.run();
            } catch (IOException e) {
                if (wire.failed) {
                    throw e;
                }
                ZipException corrupt = new ZipException(CORRUPT_GZIP);
                corrupt.initCause(e);
                throw corrupt;
            }
        }

        private interface IoCall<T> {
            T run() throws IOException;
        }
    }

    /** Counts bytes read and fails with 413 past the cap; a truncated or corrupt stream becomes a 400. */
    private static final class Capped extends BlockReads {
        private final long cap;
        private final String brokenStream;
        private long count;

        Capped(InputStream in, long cap, String brokenStream) {
            super(in);
            this.cap = cap;
            this.brokenStream = brokenStream;
        }

        @Override
        public int read(byte[] buf, int off, int len) throws IOException {
            int n;
            try {
                n = super.read(buf, off, len);
            } catch (ZipException | java.io.EOFException e) {
                throw ApiProblem.invalid("body", brokenStream);
            }
            if (n > 0) {
                add(n);
            }
            return n;
        }

        private void add(long n) {
            count += n;
            if (count > cap) {
                throw ApiProblem.tooLarge(cap);
            }
        }
    }
}
