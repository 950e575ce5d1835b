package backstate.auth;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

/**
 * Log-safe text: the characters escaped are those Unicode classes as Cc, Cf, Zl, Zp (the Unicode
 * Character Database's General_Category, as java.lang.Character reports it), and the expected
 * strings are written out by hand.
 */
class LogTextTest {
    @Test
    void printable_text_in_any_script_passes_unchanged() {
        assertEquals("gateway north – Kühlhaus 北 🚚", LogText.escaped("gateway north – Kühlhaus 北 🚚"));
    }

    @Test
    void bidirectional_overrides_and_isolates_are_escaped() {
        assertEquals("a\\u202eb\\u202ac\\u2066d\\u2069e\\u200ff", LogText.escaped("a\u202eb\u202ac\u2066d\u2069e\u200ff"));
    }

    @Test
    void line_breaks_of_every_kind_are_escaped() {
        assertEquals("a\\u000ab\\u000dc\\u0085d\\u2028e\\u2029f", LogText.escaped("a\nb\rc\u0085d\u2028e\u2029f"));
    }

    @Test
    void a_backslash_is_doubled_so_an_escape_cannot_be_forged() {
        assertEquals("a\\\\u202eb", LogText.escaped("a\\u202eb"));
    }

    @Test
    void a_lone_surrogate_is_escaped_but_a_pair_is_kept() {
        assertEquals("x\\ud83dy\\ude9a", LogText.escaped("x\ud83dy\ude9a"));
        assertEquals("\ud83d\ude9a", LogText.escaped("\ud83d\ude9a"));
    }
}
