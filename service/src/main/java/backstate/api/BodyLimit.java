package backstate.api;

import io.javalin.http.Context;
import java.io.FilterInputStream;
import java.io.IOException;
import java.io.InputStream;
import java.util.zip.GZIPInputStream;

/**
 * Opens a request body as a stream, decompressing {@code Content-Encoding: gzip}, and answers 413
 * as soon as more than the limit has been read (after decompression, so a small gzip bomb is
 * caught as early as a large plain body).
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
        InputStream raw = new Capped(ctx.bodyInputStream(), maxBytes, TRUNCATED_BODY);
        String encoding = ctx.header("Content-Encoding");
        if (encoding == null || encoding.isBlank() || encoding.equalsIgnoreCase("identity")) {
            return raw;
        }
        if (encoding.equalsIgnoreCase("gzip")) {
            try {
                return new Capped(new GZIPInputStream(raw), maxBytes, CORRUPT_GZIP);
            } catch (java.util.zip.ZipException | java.io.EOFException e) { // not gzip, or too short for its header
                throw ApiProblem.invalid("Content-Encoding", "the body is not valid gzip");
            }
        }
        throw ApiProblem.invalid("Content-Encoding", "got " + encoding + ", expected gzip or identity");
    }

    /** Counts bytes read and fails with 413 past the cap; a truncated or corrupt stream becomes a 400. */
    private static final class Capped extends FilterInputStream {
        private final long cap;
        private final String brokenStream;
        private long count;

        Capped(InputStream in, long cap, String brokenStream) {
            super(in);
            this.cap = cap;
            this.brokenStream = brokenStream;
        }

        @Override
        public int read() throws IOException {
            byte[] one = new byte[1];
            int n = read(one, 0, 1);
            return n == 1 ? one[0] & 0xff : -1;
        }

        @Override
        public int read(byte[] buf, int off, int len) throws IOException {
            int n;
            try {
                n = super.read(buf, off, len);
            } catch (java.util.zip.ZipException | java.io.EOFException e) {
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
