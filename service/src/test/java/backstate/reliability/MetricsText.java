package backstate.reliability;

import java.util.HashMap;
import java.util.Map;
import java.util.TreeMap;
import java.util.function.Predicate;

/**
 * One scrape of the server's /metrics (Prometheus text format, version 0.0.4) as series →
 * value, and what two scrapes tell about the time between them: counts, sums and, from the
 * cumulative {@code _bucket} series of a timer, a bound on a quantile. Used by the load driver only.
 */
record MetricsText(Map<String, Double> series) {

    static final MetricsText EMPTY = new MetricsText(Map.of());

    /** Every sample line {@code name{labels} value}; comments and blank lines are skipped. */
    static MetricsText parse(String text) {
        Map<String, Double> series = new HashMap<>();
        for (String line : text.split("\n")) {
            if (line.isBlank() || line.startsWith("#")) {
                continue;
            }
            int space = line.lastIndexOf(' ');
            series.put(line.substring(0, space), Double.parseDouble(line.substring(space + 1)));
        }
        return new MetricsText(series);
    }

    /** The sum over every series of {@code name} (with any labels) whose labels pass {@code labels}. */
    double sum(String name, Predicate<String> labels) {
        double total = 0;
        for (Map.Entry<String, Double> e : series.entrySet()) {
            if (nameOf(e.getKey()).equals(name) && labels.test(labelsOf(e.getKey()))) {
                total += e.getValue();
            }
        }
        return total;
    }

    double sum(String name) {
        return sum(name, l -> true);
    }

    /** Cumulative counts by upper bound in seconds ({@code le}), summed over the series that pass {@code labels}. */
    TreeMap<Double, Double> buckets(String name, Predicate<String> labels) {
        TreeMap<Double, Double> byBound = new TreeMap<>();
        for (Map.Entry<String, Double> e : series.entrySet()) {
            String labelText = labelsOf(e.getKey());
            if (nameOf(e.getKey()).equals(name + "_bucket") && labels.test(labelText)) {
                byBound.merge(le(labelText), e.getValue(), Double::sum);
            }
        }
        return byBound;
    }

    /**
     * The smallest bucket bound, in milliseconds, below which at least {@code q} of the
     * observations made between {@code before} and {@code after} fell; infinite past the last
     * bound, NaN with no observations.
     */
    static double quantileBoundMillis(TreeMap<Double, Double> before, TreeMap<Double, Double> after, double q) {
        double total = after.isEmpty() ? 0 : after.lastEntry().getValue() - before.getOrDefault(after.lastKey(), 0.0);
        if (total <= 0) {
            return Double.NaN;
        }
        for (Map.Entry<Double, Double> e : after.entrySet()) {
            double within = e.getValue() - before.getOrDefault(e.getKey(), 0.0);
            if (within >= q * total) {
                return e.getKey() * 1000;
            }
        }
        return Double.POSITIVE_INFINITY;
    }

    private static String nameOf(String key) {
        int brace = key.indexOf('{');
        return brace < 0 ? key : key.substring(0, brace);
    }

    private static String labelsOf(String key) {
        int brace = key.indexOf('{');
        return brace < 0 ? "" : key.substring(brace);
    }

    private static double le(String labels) {
        int at = labels.indexOf("le=\"");
        String bound = labels.substring(at + 4, labels.indexOf('"', at + 4));
        return bound.equals("+Inf") ? Double.POSITIVE_INFINITY : Double.parseDouble(bound);
    }
}
