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
    private BodyLimit() {
    }

    static InputStream open(Context ctx, long maxBytes) throws IOException {
        String length = ctx.header("Content-Length");
        if (length != null && length.matches("\\d{1,19}") && Long.parseLong(length) > maxBytes) {
            throw ApiProblem.tooLarge(maxBytes);
        }
        InputStream raw = new Capped(ctx.bodyInputStream(), maxBytes);
        String encoding = ctx.header("Content-Encoding");
        if (encoding == null || encoding.isBlank() || encoding.equalsIgnoreCase("identity")) {
            return raw;
        }
        if (encoding.equalsIgnoreCase("gzip")) {
            try {
                return new Capped(new GZIPInputStream(raw), maxBytes);
            } catch (java.util.zip.ZipException e) {
                throw ApiProblem.invalid("Content-Encoding", "the body is not valid gzip");
            }
        }
        throw ApiProblem.invalid("Content-Encoding", "got " + encoding + ", expected gzip or identity");
    }

    /** Counts bytes read and fails with 413 past the cap; a corrupt gzip stream becomes a 400. */
    private static final class Capped extends FilterInputStream {
        private final long cap;
        private long count;

        Capped(InputStream in, long cap) {
            super(in);
            this.cap = cap;
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
                throw ApiProblem.invalid("body", "the gzip stream is corrupt or truncated");
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
