package backstate.store;

import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.Base64;
import java.util.List;

/**
 * The keyset position after which the next page of a fleet's unit list starts: the order it
 * belongs to and the last row's sort tuple. Handed to clients as opaque base64url text; a
 * cursor from another order is refused rather than misread.
 */
record UnitCursor(UnitSort sort, List<Object> key) {

    private static final String SEPARATOR = "\n";

    String encode() {
        StringBuilder text = new StringBuilder(sort.name());
        for (Object value : key) {
            text.append(SEPARATOR).append(value);
        }
        return Base64.getUrlEncoder().withoutPadding().encodeToString(text.toString().getBytes(StandardCharsets.UTF_8));
    }

    /** @throws InvalidCursorException if the text is not a cursor of this order */
    static UnitCursor decode(String cursor, UnitSort expected) {
        try {
            String text = new String(Base64.getUrlDecoder().decode(cursor), StandardCharsets.UTF_8);
            String[] parts = text.split(SEPARATOR, -1);
            if (parts.length != expected.terms.size() + 1 || !parts[0].equals(expected.name())) {
                throw new InvalidCursorException(cursor);
            }
            List<Object> key = new ArrayList<>();
            for (int i = 1; i < parts.length; i++) {
                key.add(parse(expected, i - 1, parts[i]));
            }
            return new UnitCursor(expected, key);
        } catch (IllegalArgumentException e) { // bad base64 or bad number
            if (e instanceof InvalidCursorException invalid) {
                throw invalid;
            }
            throw new InvalidCursorException(cursor);
        }
    }

    private static double finite(double value) {
        if (!Double.isFinite(value)) {
            throw new IllegalArgumentException("non-finite number in a cursor");
        }
        return value;
    }

    /**
     * Term i of a sort: the last is the unit ID (text); χ² orders hold a 0/1 null marker, then a
     * double; recording orders a window start (Double.toString, which parses back to the same double).
     */
    private static Object parse(UnitSort sort, int term, String value) {
        if (term == sort.terms.size() - 1) {
            if (value.isEmpty()) {
                throw new IllegalArgumentException("empty unit ID");
            }
            return value;
        }
        return switch (sort) {
            case LATEST, LATEST_DESC -> finite(Double.parseDouble(value));
            case CHI_SQUARE, CHI_SQUARE_DESC -> term == 0 ? Long.parseLong(value) : finite(Double.parseDouble(value));
            case UNIT_ID, UNIT_ID_DESC -> throw new IllegalArgumentException("unit ID orders have one term");
        };
    }
}
