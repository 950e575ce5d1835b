package backstate.bench;

import backstate.estimation.EstimationOptions;
import backstate.estimation.Formulation;
import backstate.estimation.InitialStateEstimator;
import backstate.estimation.Trace;
import java.io.IOException;
import java.nio.file.Path;
import java.util.Locale;

/**
 * Times the continuous formulation against the sampled one (its baseline) on the same trace, in
 * the same JVM, alternating solves so that other load on the machine lands on both alike. Prints
 * median and minimum wall time of each and the ratio continuous / sampled; asserts nothing.
 *
 * <p>usage: FormulationBench TRACE_FILE WARMUPS REPEATS N [N ...]
 */
public final class FormulationBench {
    private FormulationBench() {
    }

    public static void main(String[] args) throws IOException {
        if (args.length < 4) {
            throw new IllegalArgumentException("got " + args.length + " arguments, expected TRACE_FILE WARMUPS REPEATS N [N ...]");
        }
        TraceFile file = TraceFile.read(Path.of(args[0]));
        int warmups = Integer.parseInt(args[1]);
        int repeats = Integer.parseInt(args[2]);
        EstimationOptions sampled = EstimationOptions.defaults().withKeepSeries(false);
        EstimationOptions continuous = sampled.withFormulation(Formulation.CONTINUOUS);
        System.out.println("| N | sampled median (s) | sampled min (s) | continuous median (s) | continuous min (s) | continuous / sampled (medians) |");
        System.out.println("|---|---|---|---|---|---|");
        for (int i = 3; i < args.length; i++) {
            Trace trace = file.prefix(Integer.parseInt(args[i]));
            long warmupEnd = System.nanoTime() + (long) (EstimatorBench.WARMUP_SECONDS * 1e9);
            for (int w = 0; w < warmups || System.nanoTime() < warmupEnd; w++) {
                InitialStateEstimator.solve(file.model, trace, sampled);
                InitialStateEstimator.solve(file.model, trace, continuous);
            }
            double[] base = new double[repeats];
            double[] cont = new double[repeats];
            for (int r = 0; r < repeats; r++) {
                base[r] = time(file, trace, sampled);
                cont[r] = time(file, trace, continuous);
            }
            System.out.printf(Locale.ROOT, "| %d | %.4f | %.4f | %.4f | %.4f | %.2f |%n", trace.samples(),
                    EstimatorBench.median(base), min(base), EstimatorBench.median(cont), min(cont),
                    EstimatorBench.median(cont) / EstimatorBench.median(base));
        }
    }

    private static double time(TraceFile file, Trace trace, EstimationOptions options) {
        long start = System.nanoTime();
        InitialStateEstimator.solve(file.model, trace, options);
        return (System.nanoTime() - start) * 1e-9;
    }

    private static double min(double[] values) {
        double out = Double.POSITIVE_INFINITY;
        for (double v : values) {
            out = Math.min(out, v);
        }
        return out;
    }
}
