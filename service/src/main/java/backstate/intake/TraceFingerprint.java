package backstate.intake;

import backstate.store.IdempotencyKey;
import backstate.store.ModelVersionRow;
import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.nio.charset.StandardCharsets;
import java.security.DigestInputStream;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.Locale;

/**
 * The fingerprint kept with an Idempotency-Key: SHA-256 over what makes a trace post the request
 * it is — the unit, the model version, the media type (without parameters), the CSV options in
 * the query, and the body's bytes after decompression (so the same trace gzipped or not is the
 * same request). A "checksum of the entire request payload" in the sense of the IETF draft "The
 * Idempotency-Key HTTP Header Field" (draft-ietf-httpapi-idempotency-key-header-07, section 2.4).
 */
final class TraceFingerprint {
    private final MessageDigest digest;
    private byte[] value;

    private TraceFingerprint(MessageDigest digest) {
        this.digest = digest;
    }

    /** Starts the fingerprint with everything but the body. */
    static TraceFingerprint start(TracePost post, ModelVersionRow version) {
        TraceFingerprint f = new TraceFingerprint(sha256());
        f.field(post.unitId());
        f.field(version.family());
        f.field(Integer.toString(version.version()));
        f.field(mediaType(post.contentTypeOrNull()));
        f.option("formulation", post.query().formulation());
        f.option("estimateOffsets", post.query().estimateOffsets());
        f.option("referenceTime", post.query().referenceTime());
        return f;
    }

    /** The body as it is read, adding every byte read to the fingerprint. */
    InputStream reading(InputStream body) {
        return new DigestInputStream(body, digest);
    }

    /**
     * Reads what the parser left of the body (at most trailing blanks: it reads to the end to
     * refuse trailing data), so that every byte counts, and completes the fingerprint.
     */
    void finish(InputStream rest) throws IOException {
        rest.transferTo(OutputStream.nullOutputStream());
        value = digest.digest();
    }

    /** The client's key with this request's fingerprint, once the body has been read to its end. */
    IdempotencyKey withKey(String key) {
        if (value == null) {
            throw new IllegalStateException("got a fingerprint without its body, expected finish() first");
        }
        return new IdempotencyKey(key, value);
    }

    /** A query option that changes what a CSV post asks for: empty when absent, else name=value. */
    private void option(String name, String valueOrNull) {
        field(valueOrNull == null ? "" : name + "=" + valueOrNull);
    }

    /** A length-prefixed field, so no two different sequences of fields hash the same bytes. */
    private void field(String text) {
        byte[] bytes = text.getBytes(StandardCharsets.UTF_8);
        digest.update(Integer.toString(bytes.length).getBytes(StandardCharsets.US_ASCII));
        digest.update((byte) ':');
        digest.update(bytes);
    }

    private static String mediaType(String contentType) {
        if (contentType == null) {
            return "";
        }
        int semicolon = contentType.indexOf(';');
        return (semicolon < 0 ? contentType : contentType.substring(0, semicolon)).trim().toLowerCase(Locale.ROOT);
    }

    private static MessageDigest sha256() {
        try {
            return MessageDigest.getInstance("SHA-256");
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException("every Java platform has SHA-256", e);
        }
    }
}
