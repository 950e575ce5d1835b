package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.zip.GZIPInputStream;

/**
 * Errors of repeated estimates of a truth over Monte-Carlo draws: their spread against the reported
 * standard errors, and how often the reported 95 % intervals hold the truth.
 */
final class CoverageTally {
    /** Spread within ±10 % of the reported standard error (the acceptance band asked for). */
    static final double SPREAD_BAND = 0.10;

    private final double[] sum;
    private final double[] squares;
    private final int[] covered;
    private int draws;

    CoverageTally(int size) {
        sum = new double[size];
        squares = new double[size];
        covered = new int[size];
    }

    void add(double[] truth, double[] estimate, double[] lower, double[] upper) {
        for (int i = 0; i < sum.length; i++) {
            double error = estimate[i] - truth[i];
            sum[i] += error;
            squares[i] += error * error;
            if (lower[i] <= truth[i] && truth[i] <= upper[i]) {
                covered[i]++;
            }
        }
        draws++;
    }

    /**
     * Asserts the spread within {@link #SPREAD_BAND} of the reported standard errors and 95 % coverage
     * within {@code coverageBand}; prints each component when {@code print}; returns the lowest coverage.
     */
    double check(double[] reported, double coverageBand, String what, boolean print) {
        double lowest = 1.0;
        for (int i = 0; i < sum.length; i++) {
            double mean = sum[i] / draws;
            double spread = Math.sqrt((squares[i] - draws * mean * mean) / (draws - 1));
            double share = covered[i] / (double) draws;
            if (print) {
                System.out.printf(Locale.ROOT, "%s[%d]: %d draws, spread/SE %.3f, 95 %% coverage %.4f%n",
                        what, i, draws, spread / reported[i], share);
            }
            assertEquals(1.0, spread / reported[i], SPREAD_BAND, what + "[" + i + "]: empirical spread / reported SE");
            assertEquals(0.95, share, coverageBand, what + "[" + i + "]: 95 % interval coverage");
            lowest = Math.min(lowest, share);
        }
        return lowest;
    }

    /** The "scenarios" of a gzipped generator file in test-data/reference. */
    static List<JsonNode> scenarios(String fileName) {
        try (InputStream in = new GZIPInputStream(Files.newInputStream(EstimateCases.root().getParent().resolve(fileName)))) {
            List<JsonNode> out = new ArrayList<>();
            new ObjectMapper().readTree(in).get("scenarios").forEach(out::add);
            return out;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
