package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.util.Random;
import java.util.stream.Stream;
import java.util.stream.StreamSupport;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * The streaming Ljung–Box statistic against numpy and scipy (reference cases written by
 * test-data/reference/generate_ljung_box.py), and joined from consecutive pieces against the
 * textbook two-pass computation (what numpy would do: centre, then sum lagged products).
 */
class LjungBoxAppendTest {
    /**
     * Joined and one-pass statistics differ only in summation order: the lag sums of N = 1000
     * products of size ≲ (2 + 1)² lose ~N·ε relative of their magnitude, and centring cancels
     * about a factor (mean² + var)/|autocovariance| ≈ 10 of it, so ~1e-12 at worst; seen ≈ 1e-14.
     */
    private static final double RELATIVE = 1e-12;
    /**
     * p = Q(h/2, Q/2) moves by about (Q/2)·δQ/Q relative for a relative change δQ/Q in Q, at most
     * ~150× here (Q ≤ 293 in the reference cases), and Commons Math's incomplete gamma is accurate
     * to ~1e-14 relative at these arguments.
     */
    private static final double P_RELATIVE = 1e-9;

    /** The cases of test-data/reference/ljung-box.json, written by generate_ljung_box.py (numpy and scipy). */
    static Stream<Arguments> referenceCases() throws IOException {
        JsonNode cases = new ObjectMapper().readTree(EstimateCases.root().resolveSibling("ljung-box.json").toFile()).get("cases");
        return StreamSupport.stream(cases.spliterator(), false).map(c -> Arguments.of(c.get("name").asText(), c));
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("referenceCases")
    void statistic_and_p_value_match_numpy_and_scipy(String name, JsonNode reference) {
        JsonNode values = reference.get("values");
        LjungBox box = new LjungBox(values.size());
        for (JsonNode v : values) {
            box.add(v.asDouble());
        }
        double q = reference.get("statistic").asDouble();
        double p = reference.get("pValue").asDouble();
        assertEquals(reference.get("lags").asInt(), box.lags(), "h = min(10, floor(N/5))");
        assertEquals(q, box.statistic(), RELATIVE * q, "Q against numpy");
        assertEquals(p, box.pValue(), P_RELATIVE * p, "p against scipy.stats.chi2.sf");
    }

    static Stream<Arguments> splits() {
        return Stream.of(
                Arguments.of("halves", new int[] {500}),
                Arguments.of("pieces shorter than the lags", new int[] {3, 7, 12, 500}),
                Arguments.of("an empty first piece and single values", new int[] {0, 1, 2, 995, 999}),
                Arguments.of("an empty middle piece", new int[] {400, 400, 401}),
                Arguments.of("every value its own piece", everyIndex(1000)));
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("splits")
    void joined_pieces_give_the_statistic_of_the_whole_series(String name, int[] cuts) {
        double[] r = autoregressive(1000, 0.3, 2.0, 7L);
        double direct = direct(r, LjungBox.lagsFor(r.length));
        LjungBox whole = new LjungBox(r.length);
        for (double v : r) {
            whole.add(v);
        }
        LjungBox joined = null;
        int from = 0;
        for (int c = 0; c <= cuts.length; c++) {
            int to = c < cuts.length ? cuts[c] : r.length;
            LjungBox piece = new LjungBox(r.length);
            for (int k = from; k < to; k++) {
                piece.add(r[k]);
            }
            if (joined == null) {
                joined = piece;
            } else {
                joined.append(piece);
            }
            from = to;
        }
        assertEquals(direct, whole.statistic(), RELATIVE * direct, "one pass vs two-pass");
        assertEquals(direct, joined.statistic(), RELATIVE * direct, name + ": joined vs two-pass");
        assertEquals(whole.pValue(), joined.pValue(), P_RELATIVE * whole.pValue(), name + ": p-value");
    }

    @Test
    void pieces_set_up_for_different_lags_are_refused() {
        LjungBox early = new LjungBox(1000);
        LjungBox late = new LjungBox(20);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> early.append(late));
        assertEquals("later: got 4 lags, expected 10 (both stretches must be set up with the whole series' "
                + "expected count)", e.getMessage());
    }

    /** Q = N(N+2) Σ_{k≤h} ρ_k²/(N−k), ρ_k = Σ_{t≥k} c_t c_{t−k} / Σ c_t², c = r − mean (Ljung &amp; Box 1978). */
    static double direct(double[] r, int lags) {
        int n = r.length;
        double mean = 0.0;
        for (double v : r) {
            mean += v;
        }
        mean /= n;
        double[] c = new double[n];
        double c0 = 0.0;
        for (int t = 0; t < n; t++) {
            c[t] = r[t] - mean;
            c0 += c[t] * c[t];
        }
        double q = 0.0;
        for (int k = 1; k <= lags; k++) {
            double s = 0.0;
            for (int t = k; t < n; t++) {
                s += c[t] * c[t - k];
            }
            double rho = s / c0;
            q += rho * rho / (n - k);
        }
        return n * (n + 2.0) * q;
    }

    /** r_t = mean + e_t, e_t = φ e_{t−1} + N(0, 1): correlated, so Q is large and every lag matters. */
    static double[] autoregressive(int n, double phi, double mean, long seed) {
        Random random = new Random(seed);
        double[] r = new double[n];
        double e = 0.0;
        for (int t = 0; t < n; t++) {
            e = phi * e + random.nextGaussian();
            r[t] = mean + e;
        }
        return r;
    }

    private static int[] everyIndex(int n) {
        int[] cuts = new int[n - 1];
        for (int i = 0; i < cuts.length; i++) {
            cuts[i] = i + 1;
        }
        return cuts;
    }
}
