package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import org.junit.jupiter.api.Test;

/**
 * Sample quantiles against numpy.percentile(method="linear") on seeded data sets
 * (test-data/reference/generate_fleet_summary.py) and against closed forms.
 */
class SampleQuantilesTest {
    /** One interpolation x_j + g·(x_{j+1} − x_j) from the same order statistics; numpy's lerp differs by an ulp or two. */
    static final double NUMPY_TOLERANCE = 1e-14;
    /** One rounding in h = (n − 1)p and one in the interpolation: an ulp or two of values below 4. */
    static final double ROUNDING_TOLERANCE = 1e-15;

    @Test
    void quantiles_match_numpy_percentile() throws IOException {
        JsonNode cases = new ObjectMapper().readTree(EstimateCases.root().resolveSibling("fleet-summary.json").toFile())
                .get("quantileCases");
        for (JsonNode c : cases) {
            double[] values = EstimateCases.vector(c.get("values"));
            double[] probabilities = EstimateCases.vector(c.get("probabilities"));
            double[] expected = EstimateCases.vector(c.get("expected"));
            double[] got = SampleQuantiles.sortAndCompute(values, values.length, probabilities);
            for (int i = 0; i < expected.length; i++) {
                assertEquals(expected[i], got[i], NUMPY_TOLERANCE * Math.max(1.0, Math.abs(expected[i])),
                        c.get("name").asText() + " p = " + probabilities[i]);
            }
        }
    }

    @Test
    void quantiles_of_1_to_101_are_the_ranks() {
        double[] values = new double[101];
        for (int i = 0; i < values.length; i++) {
            values[i] = values.length - i; // descending, so the sort matters
        }
        // h = 100 p hits an order statistic exactly: Q(p) = 1 + 100 p.
        assertArrayEquals(new double[] {1, 51, 96, 101}, SampleQuantiles.sortAndCompute(values, 101, 0, 0.5, 0.95, 1), 0.0);
    }

    @Test
    void an_even_count_interpolates_between_the_middle_values() {
        assertArrayEquals(new double[] {2.5, 3.85}, SampleQuantiles.sortAndCompute(new double[] {4, 1, 3, 2, 99}, 4, 0.5, 0.95),
                ROUNDING_TOLERANCE);
    }

    @Test
    void bad_arguments_are_rejected_before_any_work() {
        assertThrows(IllegalArgumentException.class, () -> SampleQuantiles.sortAndCompute(new double[] {1}, 0, 0.5));
        assertThrows(IllegalArgumentException.class, () -> SampleQuantiles.sortAndCompute(new double[] {1}, 2, 0.5));
        assertThrows(IllegalArgumentException.class, () -> SampleQuantiles.sortAndCompute(new double[] {1}, 1, 1.5));
        assertThrows(IllegalArgumentException.class, () -> SampleQuantiles.sortAndCompute(new double[] {Double.NaN}, 1, 0.5));
    }
}
