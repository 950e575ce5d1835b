package backstate.intake;

import java.io.IOException;
import java.io.InputStream;

/**
 * A trace post as the HTTP edge read it: identifiers already checked, everything else as sent.
 *
 * @param unitId            the unit the trace is from
 * @param family            the model family named in the query
 * @param version           the model version number named in the query
 * @param contentTypeOrNull the Content-Type header, parameters included, or null when absent
 * @param idempotencyKeyOrNull the Idempotency-Key header (checked for form), or null
 * @param query             the CSV options given in the query, as sent
 * @param body              opens the body (decompressed, capped); called once, after the version checks
 */
public record TracePost(String unitId, String family, int version, String contentTypeOrNull, String idempotencyKeyOrNull,
                        CsvQuery query, Body body) {

    /** Opens the body stream; the edge answers a body over its limit while it is read. */
    @FunctionalInterface
    public interface Body {
        InputStream open() throws IOException;
    }

    /** The query parameters that set a CSV trace's options, each null when absent. */
    public record CsvQuery(String formulation, String estimateOffsets, String referenceTime) {
        public static final CsvQuery NONE = new CsvQuery(null, null, null);

        boolean any() {
            return formulation != null || estimateOffsets != null || referenceTime != null;
        }
    }
}
