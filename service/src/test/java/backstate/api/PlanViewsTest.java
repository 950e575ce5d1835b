package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.List;
import org.junit.jupiter.api.Test;

/** The plan's reason sentences word a direction as a weighted sum of the states. */
class PlanViewsTest {
    private static final List<String> STATES = List.of("a", "b", "c");

    @Test
    void a_direction_reads_as_a_sum_with_small_weights_left_out() {
        double half = Math.sqrt(0.5);
        assertEquals("0.707·a − 0.707·b", PlanViews.directionInWords(STATES, new double[] {half, -half, 0.0}));
        assertEquals("−c", PlanViews.directionInWords(STATES, new double[] {0.0, 4e-4, -1.0}));
        assertEquals("0.6·a + 0.8·c", PlanViews.directionInWords(STATES, new double[] {0.6, 9.9e-4, 0.8}));
        assertEquals("0.6·a + 0.001·b + 0.8·c", PlanViews.directionInWords(STATES, new double[] {0.6, 1e-3, 0.8}));
    }

    @Test
    void several_directions_are_each_in_brackets() {
        assertEquals("the direction c", PlanViews.directionsInWords(STATES, List.of(new double[] {0, 0, 1})));
        assertEquals("the directions (c) and (0.6·a + 0.8·b)", PlanViews.directionsInWords(STATES,
                List.of(new double[] {0, 0, 1}, new double[] {0.6, 0.8, 0})));
        assertEquals("the directions (a), (b) and (c)", PlanViews.directionsInWords(STATES,
                List.of(new double[] {1, 0, 0}, new double[] {0, 1, 0}, new double[] {0, 0, 1})));
    }
}
