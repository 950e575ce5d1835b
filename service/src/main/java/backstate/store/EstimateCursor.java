package backstate.store;

import java.nio.charset.StandardCharsets;
import java.util.Base64;

/**
 * The keyset position after which the next page of history starts: the last row's
 * (created_at, id). Handed to clients as opaque base64url text.
 */
record EstimateCursor(long createdAtMillis, String id) {

    private static final String SEPARATOR = ":";

    String encode() {
        byte[] text = (createdAtMillis + SEPARATOR + id).getBytes(StandardCharsets.UTF_8);
        return Base64.getUrlEncoder().withoutPadding().encodeToString(text);
    }

    static EstimateCursor decode(String cursor) {
        try {
            String text = new String(Base64.getUrlDecoder().decode(cursor), StandardCharsets.UTF_8);
            int split = text.indexOf(SEPARATOR);
            if (split <= 0 || split == text.length() - 1) {
                throw new InvalidCursorException(cursor);
            }
            return new EstimateCursor(Long.parseLong(text.substring(0, split)), text.substring(split + 1));
        } catch (IllegalArgumentException e) { // bad base64 or bad number
            if (e instanceof InvalidCursorException invalid) {
                throw invalid;
            }
            throw new InvalidCursorException(cursor);
        }
    }
}
