package backstate.formats;

import backstate.bench.CallTimes;
import ch.randelshofer.fastdoubleparser.JavaDoubleParser;
import java.nio.charset.StandardCharsets;
import java.util.Arrays;
import java.util.Locale;
import java.util.function.Supplier;

/**
 * The cells of a demo-like trace read as numbers, one pass over all of them, four ways: the CSV
 * reader's own {@link PlainDecimal}; fastdoubleparser's {@link JavaDoubleParser} on the bytes,
 * after the check a cell needs to be in the trace grammar (only digits, point, sign and E: then
 * Java's grammar, which it follows, is the trace grammar); {@code JavaDoubleParser} alone (it also
 * takes NaN, Infinity, hex and a d or f suffix, so it would not do alone); and
 * {@link Double#parseDouble} on a String per cell. Each way's values are first checked against
 * {@code parseDouble} bit for bit. Printed by {@link TraceCodecBench} ({@code bench/codec.sh}):
 * the measurement behind keeping {@code PlainDecimal} (the rule: a home-made parser for users'
 * data needs a reason in a benchmark).
 */
final class CellDecimalBench {
    private CellDecimalBench() {
    }

    static void print(byte[] csv, int runs) {
        int[] bounds = cellBounds(csv);
        int cells = bounds.length / 2;
        double[] expected = new double[cells];
        for (int c = 0; c < cells; c++) {
            expected[c] = Double.parseDouble(new String(csv, bounds[2 * c], bounds[2 * c + 1] - bounds[2 * c], StandardCharsets.US_ASCII));
        }
        PlainDecimal decimals = new PlainDecimal();
        Reader plain = decimals::read;
        Reader checkedLibrary = (b, from, to) -> inTraceAlphabet(b, from, to) ? JavaDoubleParser.parseDouble(b, from, to - from) : Double.NaN;
        Reader library = (b, from, to) -> JavaDoubleParser.parseDouble(b, from, to - from);
        Reader jdk = (b, from, to) -> Double.parseDouble(new String(b, from, to - from, StandardCharsets.US_ASCII));
        double[] ours = time(runs, () -> pass(plain, csv, bounds, expected));
        double[] checked = time(runs, () -> pass(checkedLibrary, csv, bounds, expected));
        System.out.println("| " + cells + " cells of demo-like 10^6, one pass, min / median | PlainDecimal (ours)"
                + " | grammar check + JavaDoubleParser | JavaDoubleParser alone (too lax) | Double.parseDouble on a String |");
        System.out.println("|---|---|---|---|---|");
        System.out.printf(Locale.ROOT, "| wall time | %s | %s | %s | %s |%n", CallTimes.minAndMedian(ours), CallTimes.minAndMedian(checked),
                CallTimes.minAndMedian(time(runs, () -> pass(library, csv, bounds, expected))),
                CallTimes.minAndMedian(time(runs, () -> pass(jdk, csv, bounds, expected))));
        System.out.printf(Locale.ROOT, "PlainDecimal against grammar check + JavaDoubleParser, medians: %.2f of its time (%s)%n%n",
                CallTimes.median(ours) / CallTimes.median(checked),
                CallTimes.median(ours) <= CallTimes.median(checked) ? "PlainDecimal kept: not slower" : "the library is faster");
    }

    /** Reads cell bytes[from, to) as a number. */
    private interface Reader {
        double read(byte[] bytes, int from, int to);
    }

    private static double[] time(int runs, Supplier<Object> pass) {
        return CallTimes.sorted(runs, 1, pass);
    }

    /** Reads every cell; any cell not equal to parseDouble's value bit for bit stops the bench. */
    private static Object pass(Reader reader, byte[] csv, int[] bounds, double[] expected) {
        int mismatches = 0;
        for (int c = 0; c < expected.length; c++) {
            double v = reader.read(csv, bounds[2 * c], bounds[2 * c + 1]);
            mismatches += Double.doubleToRawLongBits(v) == Double.doubleToRawLongBits(expected[c]) ? 0 : 1;
        }
        if (mismatches > 0) {
            throw new IllegalStateException(mismatches + " cells read otherwise than Double.parseDouble reads them");
        }
        return expected.length;
    }

    /** Only the bytes a trace decimal may hold; with them Java's number grammar is the trace grammar. */
    private static boolean inTraceAlphabet(byte[] bytes, int from, int to) {
        for (int i = from; i < to; i++) {
            byte b = bytes[i];
            if (!(b >= '0' && b <= '9' || b == '.' || b == '-' || b == '+' || b == 'e' || b == 'E')) {
                return false;
            }
        }
        return true;
    }

    /** from, to of every cell after the header line (a plain CSV: commas and LF only). */
    private static int[] cellBounds(byte[] csv) {
        int start = 0;
        while (csv[start++] != '\n') {
            // the header
        }
        int[] bounds = new int[16];
        int n = 0;
        for (int i = start; i < csv.length; i++) {
            if (csv[i] == ',' || csv[i] == '\n') {
                if (n + 2 > bounds.length) {
                    bounds = Arrays.copyOf(bounds, bounds.length * 2);
                }
                bounds[n++] = start;
                bounds[n++] = i;
                start = i + 1;
            }
        }
        return Arrays.copyOf(bounds, n);
    }
}
