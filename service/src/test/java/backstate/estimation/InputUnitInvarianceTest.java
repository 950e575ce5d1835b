package backstate.estimation;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;

import java.util.Random;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * The unit an input is given in changes nothing: a slow lag dx/dt = a x + b u, y = x, with b and u
 * rescaled by k and 1/k, is one system, and its x̂0 must be the closed-form weighted least-squares
 * estimate whatever k. Closed form, derived by hand: with φ = e^{ah} per step and the forced state
 * f_{k+1} = φ f_k + b (e^{ah} − 1)/a · u_k (f_0 = 0), y_k = φ^k x0 + f_k + e_k, so
 * x̂0 = Σ φ^k (y_k − f_k) / Σ φ^{2k} and its standard error σ / √(Σ φ^{2k}).
 *
 * <p>The forced response here reaches 2.5·10⁷ against σ = 0.01, so one ulp of the input matrix
 * moves x̂0 by about 10⁻⁸: the check is that the unit leaves x̂0 within a thousandth of its
 * standard error of the closed form. Squaring the exponential's block by its whole norm put it
 * 4 to 5 standard errors off at b = 1.
 */
class InputUnitInvarianceTest {
    private static final double A = -1e-9;
    private static final double H = 1e6;
    private static final int N = 100;
    private static final double SIGMA = 0.01;
    /** Share of the standard error the unit may move x̂0 by: far below any noise, far above rounding here. */
    private static final double SHARE_OF_SE = 1e-3;
    /** Closed form and engine agree on the standard error to rounding (common practice, no source). */
    private static final double RELATIVE = 1e-9;

    @ParameterizedTest(name = "b = {0}")
    @ValueSource(doubles = {1e-3, 1.0, 1e3, 1e6})
    void the_estimate_is_the_closed_form_whatever_the_unit_of_the_input(double b) {
        double phi = Math.exp(A * H);
        double gain = b * Math.expm1(A * H) / A;
        Random noise = new Random(7);
        double[] times = new double[N];
        double[] u = new double[N];
        double[] y = new double[N];
        double forced = 0.0;
        double power = 1.0;
        double numerator = 0.0;
        double denominator = 0.0;
        for (int k = 0; k < N; k++) {
            times[k] = k * H;
            u[k] = ((k / 7) % 2 == 0 ? 1.0 : -0.5) / b;
            y[k] = power * 1.0 + forced + SIGMA * noise.nextGaussian();
            numerator += power * (y[k] - forced);
            denominator += power * power;
            forced = phi * forced + gain * u[k];
            power *= phi;
        }
        StateSpaceModel model = StateSpaceModel.continuous(new double[][] {{A}}, new double[][] {{b}},
                new double[][] {{1.0}}, new double[][] {{0.0}}, new double[] {SIGMA});
        EstimationResult result = InitialStateEstimator.solve(model, new Trace(times, y, u, 1, 1, null),
                EstimationOptions.defaults().withKeepSeries(false));
        Estimate e = assertInstanceOf(Estimate.class, result);
        double se = SIGMA / Math.sqrt(denominator);
        assertEquals(numerator / denominator, e.solution()[0], SHARE_OF_SE * se, "x0 with b = " + b);
        assertEquals(se, e.standardErrors()[0], RELATIVE * se, "standard error");
    }
}
