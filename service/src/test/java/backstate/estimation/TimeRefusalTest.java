package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertThrows;

import org.junit.jupiter.api.Test;

/**
 * A refused time keeps its value apart from its words: the engine says seconds, a caller words the
 * time its own way. A discrete model's reference time off its grid is refused by the validation the
 * intake runs, before any solve.
 */
class TimeRefusalTest {
    @Test
    void the_engine_says_plain_seconds_and_a_caller_may_word_the_time_its_own_way() {
        ModelException e = ModelException.ofTime("time[2]", 1_796_083_350.5, "something else");
        assertEquals("got 1796083350.5 s, expected something else", e.problem());
        assertEquals("time[2]: got 1796083350.5 s, expected something else", e.getMessage());
        ModelException worded = e.withTimeWords(t -> "T" + (long) t);
        assertEquals("got T1796083350, expected something else", worded.problem());
        assertEquals("options.time[2]: got T1796083350, expected something else",
                worded.renamed("options.time[2]").getMessage());
        assertEquals("got T1796083350, expected something else",
                e.renamed("x").withTimeWords(t -> "T" + (long) t).problem(), "renaming keeps the time");
        ModelException plain = new ModelException("a", "got 2 rows");
        assertSame(plain, plain.withTimeWords(t -> "never"));
        assertEquals("got 60 s, expected x", ModelException.ofTime("f", 60.0, "x").problem());
        ModelException window = ModelException.ofTime("referenceTime", 70.0, "a time inside the window %s to %s", 0.0, 60.5);
        assertEquals("got 70 s, expected a time inside the window 0 s to 60.5 s", window.problem());
        assertEquals("got <70>, expected a time inside the window <0> to <60>",
                window.withTimeWords(t -> "<" + (long) t + ">").problem(), "every time it names is worded");
        assertEquals("got 5 s, expected 100 % of %d", ModelException.ofTime("f", 5, "100 % of %d").problem(),
                "a % that is not %s is text");
        assertThrows(IllegalArgumentException.class, () -> ModelException.ofTime("f", 5, "%s to %s", 1.0),
                "a time short for its template is the caller's mistake");
        assertEquals("got 0.000001 s, expected x", ModelException.ofTime("f", 1e-6, "x").problem());
    }

    @Test
    void a_discrete_models_reference_time_off_its_grid_is_refused_before_any_solve() {
        StateSpaceModel model = StateSpaceModel.discrete(new double[][] {{0.9, 0.1}, {0, 0.8}}, null,
                new double[][] {{1, 0}}, null, 60.0, new double[] {0.1});
        double[] times = {1000, 1060, 1120};
        ModelException refused = assertThrows(ModelException.class, () -> InitialStateEstimator.validate(model, times, 1, 0,
                j -> Double.NaN, EstimationOptions.defaults().withReferenceTime(1090.0)));
        assertEquals("referenceTime", refused.field());
        // (1090 − 1000) / 60 = 1.5 periods.
        assertEquals("got 1090 s, expected a whole number of sample periods (60 s) after the first sample;"
                + " it is 1.5 periods after it", refused.problem());
        InitialStateEstimator.validate(model, times, 1, 0, j -> Double.NaN,
                EstimationOptions.defaults().withReferenceTime(1060.0));
    }
}
