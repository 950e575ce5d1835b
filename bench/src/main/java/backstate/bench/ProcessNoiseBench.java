package backstate.bench;

import backstate.estimation.Estimate;
import backstate.estimation.EstimationOptions;
import backstate.estimation.Formulation;
import backstate.estimation.InitialStateEstimator;
import backstate.estimation.ProcessNoiseSmoother;
import backstate.estimation.StateSpaceModel;
import backstate.estimation.Trace;
import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Locale;

/**
 * Times the process-noise formulation against the deterministic sampled solve (its baseline) on the
 * same trace, in the same JVM, alternating: x̂0 alone ({@link ProcessNoiseSmoother#solveInitialState},
 * memory independent of N), the service's solve without a series (x̂0 and the window-end state, by
 * the forward filter, memory independent of N), the same figures by the smoother's forward sweep (the
 * route taken before the filter, here reached by asking a reference state at the first sample, which
 * needs it) with the filter's time over it, and with the smoothed trajectory kept every
 * {@code N/2000}-th sample. Prints medians and ratios; writes x̂0 for each N to a TSV so the dense
 * NumPy reference can report agreement. Asserts nothing.
 *
 * <p>The model is the benchmark's (n = 10, p = 3, m = 2) with process noise of spectral density
 * {@link #LEVEL}·I.
 *
 * <p>usage: ProcessNoiseBench TRACE_FILE OUT_TSV WARMUPS REPEATS N [N ...]
 */
public final class ProcessNoiseBench {
    /** Spectral density of the process noise on every state, state²/s. */
    static final double LEVEL = 1e-3;
    /** Points kept in the trajectory, as the API's series cap does. */
    static final int SERIES_POINTS = 2000;

    private ProcessNoiseBench() {
    }

    public static void main(String[] args) throws IOException {
        if (args.length < 5) {
            throw new IllegalArgumentException("got " + args.length + " arguments, expected TRACE_FILE OUT_TSV WARMUPS REPEATS N [N ...]");
        }
        TraceFile file = TraceFile.read(Path.of(args[0]));
        int warmups = Integer.parseInt(args[2]);
        int repeats = Integer.parseInt(args[3]);
        int n = file.model.states();
        double[][] q = new double[n][n];
        for (int i = 0; i < n; i++) {
            q[i][i] = LEVEL;
        }
        StateSpaceModel noisy = file.model.withProcessNoise(q);
        EstimationOptions sampled = EstimationOptions.defaults().withKeepSeries(false);
        EstimationOptions x0Only = sampled.withFormulation(Formulation.PROCESS_NOISE);
        System.out.println("| N | sampled median (s) | process noise, x0 only (s) | ratio | x0 + window end, filter (s) | ratio"
                + " | x0 + window end, smoother route (s) | ratio | filter / smoother route | with trajectory (s) | ratio |");
        System.out.println("|---|---|---|---|---|---|---|---|---|---|---|");
        StringBuilder agreement = new StringBuilder();
        try (PrintWriter out = new PrintWriter(Files.newBufferedWriter(Path.of(args[1])))) {
            for (int i = 4; i < args.length; i++) {
                Trace trace = file.prefix(Integer.parseInt(args[i]));
                EstimationOptions trajectory = x0Only.withKeepSeries(true)
                        .withSeriesStride(Math.max(1, trace.samples() / SERIES_POINTS));
                EstimationOptions smootherRoute = x0Only.withReferenceTime(trace.time(0));
                for (int w = 0; w < warmups; w++) {
                    InitialStateEstimator.solve(file.model, trace, sampled);
                    ProcessNoiseSmoother.solveInitialState(noisy, trace, x0Only);
                }
                double[] base = new double[repeats];
                double[] only = new double[repeats];
                double[] end = new double[repeats];
                double[] smoother = new double[repeats];
                double[] full = new double[repeats];
                for (int r = 0; r < repeats; r++) {
                    base[r] = time(() -> InitialStateEstimator.solve(file.model, trace, sampled));
                    only[r] = time(() -> ProcessNoiseSmoother.solveInitialState(noisy, trace, x0Only));
                    end[r] = time(() -> InitialStateEstimator.solve(noisy, trace, x0Only));
                    smoother[r] = time(() -> InitialStateEstimator.solve(noisy, trace, smootherRoute));
                    full[r] = time(() -> InitialStateEstimator.solve(noisy, trace, trajectory));
                }
                double b = EstimatorBench.median(base);
                double o = EstimatorBench.median(only);
                double w = EstimatorBench.median(end);
                double sm = EstimatorBench.median(smoother);
                double f = EstimatorBench.median(full);
                System.out.printf(Locale.ROOT, "| %d | %.4f | %.4f | %.1f | %.4f | %.1f | %.4f | %.1f | %.2f | %.4f | %.1f |%n",
                        trace.samples(), b, o, o / b, w, w / b, sm, sm / b, w / sm, f, f / b);
                Estimate.StateAt byFilter = ((Estimate) InitialStateEstimator.solve(noisy, trace, x0Only)).windowEnd();
                Estimate.StateAt bySmoother = ((Estimate) InitialStateEstimator.solve(noisy, trace, smootherRoute)).windowEnd();
                agreement.append(String.format(Locale.ROOT, "window end at N = %d: filter against smoother route,"
                        + " relative difference %.1e (state), %.1e (covariance)%n", trace.samples(),
                        relativeDifference(byFilter.state(), bySmoother.state()),
                        relativeDifference(byFilter.covariance(), bySmoother.covariance())));
                Estimate e = (Estimate) ProcessNoiseSmoother.solveInitialState(noisy, trace, x0Only);
                StringBuilder line = new StringBuilder().append(trace.samples()).append('\t').append(o);
                for (int s = 0; s < n; s++) {
                    line.append('\t').append(e.solution()[s]);
                }
                out.println(line);
            }
        }
        System.out.print(agreement);
    }

    /** ‖u − v‖/‖v‖ (Frobenius for a flattened matrix). */
    private static double relativeDifference(double[] u, double[] v) {
        double diff = 0.0;
        double norm = 0.0;
        for (int i = 0; i < v.length; i++) {
            diff += (u[i] - v[i]) * (u[i] - v[i]);
            norm += v[i] * v[i];
        }
        return Math.sqrt(diff / norm);
    }

    private static double time(Runnable solve) {
        long start = System.nanoTime();
        solve.run();
        return (System.nanoTime() - start) * 1e-9;
    }
}
