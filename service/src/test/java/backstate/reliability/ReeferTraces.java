package backstate.reliability;

import backstate.estimation.StateSpaceModel;
import backstate.estimation.ZeroOrderHold;
import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Locale;
import java.util.Random;

/**
 * Synthetic traces of the demo model reefer-40 v1 (n = 4 states, 2 outputs, 2 inputs), simulated
 * by zero-order hold from a random plausible initial state with seeded Gaussian noise at the
 * model's σ, so the service solves them as it would a gateway's upload.
 *
 * <p>Layout of the CSV: {@code time,return_air,supply_air,cooling_power,ambient}, one row a minute.
 */
public final class ReeferTraces {
    /** The demo data's logging period, seconds. */
    public static final double PERIOD_SECONDS = 60.0;
    public static final String CSV_HEADER = "time,return_air,supply_air,cooling_power,ambient\n";
    /** Output noise of the demo model (σ in its document), degC. */
    private static final double OUTPUT_SIGMA = 0.15;

    private final StateSpaceModel model;
    private final double[] ad;
    private final double[] bd;

    public ReeferTraces(Path testData) {
        this.model = readModel(testData.resolve("demo/models/reefer-40.v1.json"));
        ZeroOrderHold.Step step = ZeroOrderHold.discretize(model.a(), model.b(), model.states(), model.inputs(),
                PERIOD_SECONDS);
        this.ad = step.transition();
        this.bd = step.input();
    }

    public static Path modelFile(Path testData) {
        return testData.resolve("demo/models/reefer-40.v1.json");
    }

    /** A CSV trace of {@code samples} rows; the same seed gives the same bytes. */
    public byte[] csv(int samples, long seed) {
        StringBuilder out = new StringBuilder(CSV_HEADER.length() + samples * 40).append(CSV_HEADER);
        simulate(samples, seed, (t, y, u) -> out.append(String.format(Locale.ROOT, "%.0f,%.3f,%.3f,%.2f,%.2f%n",
                t, y[0], y[1], u[0], u[1])));
        return out.toString().getBytes(StandardCharsets.UTF_8);
    }

    /** The same trace in the JSON body form (columns). */
    public byte[] json(int samples, long seed) {
        StringBuilder time = new StringBuilder();
        StringBuilder ret = new StringBuilder();
        StringBuilder sup = new StringBuilder();
        StringBuilder cool = new StringBuilder();
        StringBuilder amb = new StringBuilder();
        simulate(samples, seed, (t, y, u) -> {
            String sep = time.length() == 0 ? "" : ",";
            time.append(sep).append(String.format(Locale.ROOT, "%.0f", t));
            ret.append(sep).append(String.format(Locale.ROOT, "%.3f", y[0]));
            sup.append(sep).append(String.format(Locale.ROOT, "%.3f", y[1]));
            cool.append(sep).append(String.format(Locale.ROOT, "%.2f", u[0]));
            amb.append(sep).append(String.format(Locale.ROOT, "%.2f", u[1]));
        });
        String body = "{\"time\":[" + time + "],\"outputs\":{\"return_air\":[" + ret + "],\"supply_air\":[" + sup
                + "]},\"inputs\":{\"cooling_power\":[" + cool + "],\"ambient\":[" + amb + "]}}";
        return body.getBytes(StandardCharsets.UTF_8);
    }

    private interface Row {
        void accept(double time, double[] y, double[] u);
    }

    private void simulate(int samples, long seed, Row row) {
        Random random = new Random(seed);
        int n = model.states();
        int p = model.outputs();
        int m = model.inputs();
        double[] c = model.c();
        double[] d = model.d();
        // wall, air, cargo surface, cargo core: air pulled down, cargo still warm (see demo README)
        double[] x = {18 + 6 * random.nextDouble(), 2 + 3 * random.nextDouble(), 6 + 6 * random.nextDouble(),
                8 + 6 * random.nextDouble()};
        double ambient = 25 + 10 * random.nextDouble();
        double[] y = new double[p];
        double[] u = new double[m];
        double[] next = new double[n];
        for (int k = 0; k < samples; k++) {
            u[0] = 6.0 + 0.3 * random.nextGaussian();
            u[1] = ambient + 0.05 * random.nextGaussian();
            for (int j = 0; j < p; j++) {
                double v = 0;
                for (int i = 0; i < n; i++) {
                    v += c[j * n + i] * x[i];
                }
                for (int i = 0; i < m; i++) {
                    v += d[j * m + i] * u[i];
                }
                y[j] = v + OUTPUT_SIGMA * random.nextGaussian();
            }
            row.accept(k * PERIOD_SECONDS, y, u);
            for (int i = 0; i < n; i++) {
                double v = 0;
                for (int l = 0; l < n; l++) {
                    v += ad[i * n + l] * x[l];
                }
                for (int l = 0; l < m; l++) {
                    v += bd[i * m + l] * u[l];
                }
                next[i] = v;
            }
            System.arraycopy(next, 0, x, 0, n);
        }
    }

    private static StateSpaceModel readModel(Path file) {
        try {
            return Json.mapper(Limits.DEFAULTS).readValue(Files.readAllBytes(file), ModelDocument.class)
                    .toModel(Limits.DEFAULTS);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
