package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.UUID;
import org.junit.jupiter.api.Test;

class SqlIdTest {

    /** The Identifier schema of openapi/backstate.yaml. */
    private static final String IDENTIFIER = "^[A-Za-z0-9][A-Za-z0-9_.-]{0,63}$";

    @Test
    void an_id_is_a_version_7_uuid_carrying_its_milliseconds() {
        long millis = 1_764_684_000_123L;
        UUID id = UUID.fromString(Sql.newId(millis));
        // RFC 9562 §5.7: version 7, variant 10 (java.util.UUID reports it as 2), unix_ts_ms in the top 48 bits.
        assertEquals(7, id.version());
        assertEquals(2, id.variant());
        assertEquals(millis, id.getMostSignificantBits() >>> 16);
    }

    @Test
    void an_id_matches_the_api_identifier_pattern_in_canonical_form() {
        String id = Sql.newId();
        assertTrue(id.matches(IDENTIFIER), id);
        assertEquals(UUID.fromString(id).toString(), id, "lowercase 8-4-4-4-12 text, RFC 9562 §4");
    }

    @Test
    void ids_of_later_milliseconds_sort_later_as_text() {
        List<String> ids = new ArrayList<>();
        for (long ms : new long[] {0xFFL, 0x100L, 0xFFFFL, 0x10000L, 1_764_684_000_123L, 1_764_684_000_124L}) {
            ids.add(Sql.newId(ms));
        }
        List<String> sorted = new ArrayList<>(ids);
        sorted.sort(null);
        assertEquals(ids, sorted);
    }

    @Test
    void ids_of_the_same_millisecond_differ() {
        assertNotEquals(Sql.newId(42L), Sql.newId(42L), "74 random bits each");
    }
}
