package backstate.text;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.List;
import org.junit.jupiter.api.Test;

class ListedTest {
    @Test
    void items_are_joined_with_commas_and_the_conjunction_before_the_last() {
        assertEquals("", Listed.of(List.of(), "or"));
        assertEquals("a", Listed.of(List.of("a"), "or"));
        assertEquals("a or b", Listed.of(List.of("a", "b"), "or"));
        assertEquals("a, b and c", Listed.of(List.of("a", "b", "c"), "and"));
    }
}
