package backstate.text;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

class CountedTest {
    @Test
    void one_is_singular_and_every_other_count_plural() {
        assertEquals("0 rows", Counted.of(0, "row"));
        assertEquals("1 row", Counted.of(1, "row"));
        assertEquals("2 rows", Counted.of(2, "row"));
        assertEquals("-1 values", Counted.of(-1, "value"));
    }
}
