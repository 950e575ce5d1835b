package backstate.store;

import java.nio.charset.StandardCharsets;
import java.util.Base64;

/**
 * The keyset position after which the next page of a unit's history starts, in recording order:
 * the last row's (window_start, created_at, id). Handed to clients as opaque base64url text; the
 * window start travels as its IEEE bits, so it compares exactly.
 */
record RecordingCursor(double windowStart, long createdAtMillis, String id) {

    private static final String SEPARATOR = ":";

    String encode() {
        String text = Double.doubleToLongBits(windowStart) + SEPARATOR + createdAtMillis + SEPARATOR + id;
        return Base64.getUrlEncoder().withoutPadding().encodeToString(text.getBytes(StandardCharsets.UTF_8));
    }

    static RecordingCursor decode(String cursor) {
        try {
            String[] parts = new String(Base64.getUrlDecoder().decode(cursor), StandardCharsets.UTF_8).split(SEPARATOR, 3);
            if (parts.length != 3 || parts[2].isEmpty()) {
                throw new InvalidCursorException(cursor);
            }
            double windowStart = Double.longBitsToDouble(Long.parseLong(parts[0]));
            if (!Double.isFinite(windowStart)) {
                throw new InvalidCursorException(cursor);
            }
            return new RecordingCursor(windowStart, Long.parseLong(parts[1]), parts[2]);
        } catch (IllegalArgumentException e) { // bad base64 or bad number
            if (e instanceof InvalidCursorException invalid) {
                throw invalid;
            }
            throw new InvalidCursorException(cursor);
        }
    }
}
