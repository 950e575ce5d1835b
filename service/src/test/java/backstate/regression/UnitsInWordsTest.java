package backstate.regression;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.Set;
import java.util.TreeSet;
import java.util.stream.Collectors;
import java.util.stream.IntStream;
import org.junit.jupiter.api.Test;

/** A regression refusal names the units without traces in words, at most ten of them. */
class UnitsInWordsTest {
    @Test
    void one_several_and_many_units() {
        assertEquals("the unit NOPE-1", RegressionRequests.unitsInWords(Set.of("NOPE-1")));
        assertEquals("the units A-1, B-2", RegressionRequests.unitsInWords(new TreeSet<>(Set.of("B-2", "A-1"))));
        Set<String> many = IntStream.range(0, 13).mapToObj(i -> String.format("U-%02d", i))
                .collect(Collectors.toCollection(TreeSet::new));
        assertEquals("the units U-00, U-01, U-02, U-03, U-04, U-05, U-06, U-07, U-08, U-09 and 3 more",
                RegressionRequests.unitsInWords(many));
    }
}
