package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.BuildInfo;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * The If-None-Match check. Weak comparison as RFC 9110 §8.8.3.2 defines it, with the four pairs of
 * its example table; the list grammar (§13.1.2: "*" or 1#entity-tag) from the same section.
 */
class EntityTagsTest {
    /** A weak entity-tag: W/ DQUOTE *etagc DQUOTE, etagc = %x21 / %x23-7E (RFC 9110 §8.8.3), one or more. */
    static final Pattern ENTITY_TAG = Pattern.compile("W/\"[\\x21\\x23-\\x7E]+\"");

    @ParameterizedTest(name = "{0} against {1}: {2}")
    @CsvSource(delimiter = '|', value = {
            // RFC 9110 §8.8.3.2, the example table's weak-comparison column.
            "W/\"1\" | W/\"1\" | true",
            "W/\"1\" | W/\"2\" | false",
            "W/\"1\" | \"1\"   | true",
            "\"1\"   | \"1\"   | true",
            // Lists, separators and "*" (RFC 9110 §13.1.2).
            "\"1\"   | \"2\", \"1\"        | true",
            "\"1\"   | \"2\",\"3\"         | false",
            "\"1\"   | ' \t\"2\" ,, W/\"1\" ' | true",
            "\"1\"   | *                  | true",
            "\"1\"   | ' * '              | true",
            // Opaque tags compare whole, case and all.
            "\"ab\"  | \"a\"               | false",
            "\"a\"   | \"ab\"              | false",
            "\"ab\"  | \"AB\"              | false",
            "\"a,b\" | \"a,b\"             | true",
            // Not a list of entity tags: matches nothing, so the full answer goes out.
            "\"1\"   | 1                  | false",
            "\"1\"   | \"1                | false",
            "\"1\"   | \"1\"x             | false",
            "\"1\"   | \"1\" \"1\"x        | false",
            "\"1\"   | W/                 | false",
            "\"1\"   | w/\"1\"            | false",
            "\"1\"   | *, \"1\"           | false",
    })
    void if_none_match_uses_the_weak_comparison_over_a_list_of_tags(String tag, String ifNoneMatch, boolean matches) {
        assertEquals(matches, EntityTags.matches(ifNoneMatch, tag));
    }

    @Test
    void a_control_character_or_a_quote_inside_a_tag_in_the_header_is_not_an_entity_tag() {
        assertFalse(EntityTags.matches("\"a\u0001b\"", "\"a\u0001b\""));
        assertFalse(EntityTags.matches("\"a b\"", "\"a b\""));
    }

    @Test
    void a_tag_names_its_parts_and_this_build_and_is_a_weak_entity_tag() {
        String tag = EntityTags.of("series", "01a2-bb", "1000");
        assertEquals("W/\"series;01a2-bb;1000;" + BuildInfo.build() + "\"", tag);
        assertTrue(ENTITY_TAG.matcher(tag).matches(), tag);
        assertTrue(EntityTags.matches(tag, tag));
        assertTrue(EntityTags.matches(tag.substring(2), tag), "the opaque tag alone, by the weak comparison");
    }

    @ParameterizedTest
    @ValueSource(strings = {"a b", "a\"b", "a;b", "naïve", "a\u007Fb", "tab\there"})
    void characters_a_tag_cannot_hold_become_underscores_so_parts_stay_apart(String part) {
        String tag = EntityTags.of(part, "x");
        assertTrue(ENTITY_TAG.matcher(tag).matches(), tag);
        assertEquals(part.length(), tag.substring(3, tag.indexOf(';')).length(), tag);
        assertFalse(tag.substring(3, tag.indexOf(';')).contains(";"), tag);
    }

    /** Two builds of one version (0.1.0-SNAPSHOT twice) must not share tags: the build time is in them. */
    @org.junit.jupiter.api.Test
    void the_build_part_of_a_tag_is_the_version_and_the_build_time() {
        assertEquals(true, BuildInfo.build().matches(java.util.regex.Pattern.quote(BuildInfo.version()) + "\\+\\d{8}T\\d{6}Z"),
                BuildInfo.build());
    }
}
