package backstate.auth;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.FileSystems;
import java.nio.file.Path;
import java.nio.file.PathMatcher;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;

import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.junit.jupiter.params.provider.ValueSource;

/** Gateway scopes: globs over unit IDs, anchored at both ends, with no regex syntax let through. */
class UnitPatternTest {

    @ParameterizedTest(name = "{0} covers {1}: {2}")
    @CsvSource({
            "RCX-1*, RCX-1, true",
            "RCX-1*, RCX-10415, true",
            "RCX-1*, RCX-2, false",
            "RCX-1*, XRCX-1, false",        // anchored at the start
            "RCX-1, RCX-10, false",         // anchored at the end
            "RCX-1, rcx-1, false",          // case-sensitive, as unit IDs are
            "A.B, A.B, true",
            "A.B, AxB, false",              // '.' is a literal dot, not "any character"
            "RCX-?5, RCX-15, true",
            "RCX-?5, RCX-5, false",         // '?' is exactly one character
            "RCX-?5, RCX-115, false",
            "*, ANY_unit.9, true",
            "*-7, ZZ-7, true",
            "*-7, ZZ-8, false"})
    void glob_matches_whole_unit_ids_only(String glob, String unitId, boolean expected) {
        assertEquals(expected, UnitPattern.of(glob).matches(unitId));
    }

    @ParameterizedTest
    @ValueSource(strings = {"", "RCX/1*", "RCX 1", "RCX-(1|2)", "[A-Z]*", "RCX-1+", "a\\d", "^RCX", "RCX$", "é*",
            "RRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRR"})
    void anything_but_unit_id_characters_and_wildcards_is_refused(String glob) {
        assertTrue(UnitPattern.parse(glob).isEmpty(), glob);
    }

    @ParameterizedTest
    @ValueSource(strings = {"RCX-1/../2", "RCX-1\n", "RCX-1 2", "RCX-1%2F"})
    void wildcards_do_not_match_characters_unit_ids_cannot_hold(String unitId) {
        assertFalse(UnitPattern.of("RCX-1*").matches(unitId), unitId);
        assertFalse(UnitPattern.of("*").matches(unitId), unitId);
    }

    /**
     * Every glob of up to 5 characters over {a, b, ., *, ?} against every ID of up to 5 characters
     * over {a, b, .}: the same verdict as the JDK's own glob matcher ({@code FileSystem.getPathMatcher("glob:…")},
     * whose {@code *} and {@code ?} match any character but '/', which neither side holds here).
     */
    @Test
    void glob_agrees_with_the_jdks_glob_matcher_on_every_small_pattern_and_id() {
        List<String> ids = words("ab.", 5);
        int compared = 0;
        for (String glob : words("ab.*?", 5)) {
            if (glob.isEmpty()) {
                continue;
            }
            PathMatcher reference = FileSystems.getDefault().getPathMatcher("glob:" + glob);
            UnitPattern pattern = UnitPattern.of(glob);
            for (String id : ids) {
                assertEquals(reference.matches(Path.of(id)), pattern.matches(id), glob + " against '" + id + "'");
                compared++;
            }
        }
        assertEquals(3905 * 364, compared);
    }

    /**
     * Patterns that make a backtracking regular expression take seconds to forever (`*a*a*a*a*a*a*b`
     * against 64 a's took 11-19 s of CPU as a regex): the walk stays within
     * (glob length + 1) × (ID length + 1) steps and gives the right verdict.
     */
    @ParameterizedTest(name = "{0}")
    @ValueSource(strings = {"*a*a*a*a*a*a*b", "***************************************************************b",
            "*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*a*b", "a*?*?*?*?*?*?*?*?*?*?*?*?*?*?*?*?*?*?*?*?*?*b"})
    void hostile_patterns_match_in_at_most_glob_times_id_steps(String glob) {
        UnitPattern pattern = UnitPattern.of(glob);
        String id = "a".repeat(64);
        assertFalse(pattern.matches(id), "no 'b' in the ID");
        assertTrue(pattern.matches("a".repeat(63) + "b"), "ends in 'b'");
        int steps = pattern.steps(id);
        assertTrue(steps <= (glob.length() + 1) * (id.length() + 1), steps + " steps");
    }

    @Test
    void stars_are_counted_for_the_cap_on_new_keys() {
        assertEquals(0, UnitPattern.of("RCX-1?").stars());
        assertEquals(3, UnitPattern.of("*RCX*1*").stars());
        assertEquals(8, UnitPattern.MAX_STARS);
    }

    /** Every word over the alphabet of length 0 to maxLength. */
    static List<String> words(String alphabet, int maxLength) {
        List<String> all = new ArrayList<>(List.of(""));
        List<String> last = List.of("");
        for (int length = 1; length <= maxLength; length++) {
            List<String> next = new ArrayList<>();
            for (String w : last) {
                for (char c : alphabet.toCharArray()) {
                    next.add(w + c);
                }
            }
            all.addAll(next);
            last = next;
        }
        return all;
    }
}
