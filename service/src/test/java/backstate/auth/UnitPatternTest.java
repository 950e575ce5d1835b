package backstate.auth;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

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
}
