package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/**
 * When no σ is given anywhere, an interval rests on σ̂ from the residuals: Student-t with dof degrees
 * of freedom when there are some, and none at all when there are none (an assumed σ = 1 would make
 * its width a matter of the output's unit). A one-state model y = x, sampled once or twice, without σ.
 */
class IntervalRuleTest {
    /** scipy.stats.t.ppf(0.975, 1), computed once. */
    private static final double T_975_ONE_DOF = 12.706204736174694;

    @Test
    void no_sigma_and_no_degree_of_freedom_gives_no_interval() {
        Estimate e = solve(new double[] {0.0}, new double[] {20.0});
        assertEquals(0, e.degreesOfFreedom());
        assertEquals(20.0, e.solution()[0], 1e-12);
        assertTrue(Double.isNaN(e.intervalLower()[0]) && Double.isNaN(e.intervalUpper()[0]),
                "got [" + e.intervalLower()[0] + ", " + e.intervalUpper()[0] + "]");
        assertTrue(Double.isNaN(e.windowEnd().lower()[0]) && Double.isNaN(e.windowEnd().upper()[0]), "window end");
    }

    /**
     * Two readings of a constant state: x̂0 is their mean (decay e^{−0.01·1} folded in exactly below), σ̂ from
     * their spread, and the interval x̂0 ± t(0.975, 1)·σ̂·se with se the σ = 1 standard error.
     */
    @Test
    void no_sigma_and_one_degree_of_freedom_gives_a_student_t_interval() {
        Estimate e = solve(new double[] {0.0, 1.0}, new double[] {20.0, 21.0});
        assertEquals(1, e.degreesOfFreedom());
        double phi = Math.exp(-0.01);
        double se = 1.0 / Math.sqrt(1.0 + phi * phi);
        double estimate = (20.0 + phi * 21.0) / (1.0 + phi * phi);
        double chiSquare = Math.pow(20.0 - estimate, 2) + Math.pow(21.0 - phi * estimate, 2);
        assertEquals(estimate, e.solution()[0], 1e-12);
        double half = T_975_ONE_DOF * Math.sqrt(chiSquare) * se;
        assertEquals(estimate - half, e.intervalLower()[0], 1e-9);
        assertEquals(estimate + half, e.intervalUpper()[0], 1e-9);
    }

    private static Estimate solve(double[] times, double[] y) {
        StateSpaceModel model = StateSpaceModel.continuous(new double[][] {{-0.01}}, null, new double[][] {{1.0}}, null, null);
        return assertInstanceOf(Estimate.class, InitialStateEstimator.solve(model, new Trace(times, y, null, 1, 0, null),
                EstimationOptions.defaults().withKeepSeries(false)));
    }
}
