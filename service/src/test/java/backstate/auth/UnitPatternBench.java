package backstate.auth;

import backstate.bench.CallTimes;
import java.util.Locale;

/**
 * Wall time of one gateway-scope match for the patterns that made the former regular-expression
 * matcher backtrack for seconds or forever, against a 64-character unit ID, plus an ordinary
 * pattern. Prints Markdown (min / median microseconds per match); asserts nothing. Run by
 * {@code bench/unit-pattern.sh}; the target is well under a millisecond for 64 stars.
 */
public final class UnitPatternBench {
    private static final String ID = "a".repeat(64);
    private static final String[] GLOBS = {"RCX-1*", "*a*a*a*a*a*a*b", "*".repeat(63) + "b", "*a".repeat(31) + "*b"};

    private UnitPatternBench() {
    }

    public static void main(String[] args) {
        int runs = args.length > 0 ? Integer.parseInt(args[0]) : 15;
        System.out.println("| pattern | stars | ID | matches | min / median per match (µs) |");
        System.out.println("|---|---|---|---|---|");
        for (String glob : GLOBS) {
            UnitPattern pattern = UnitPattern.of(glob);
            double[] times = CallTimes.sorted(runs, 10_000, () -> pattern.matches(ID));
            System.out.printf(Locale.ROOT, "| `%s` | %d | 64 × a | %b | %.2f / %.2f |%n", shorten(glob), pattern.stars(),
                    pattern.matches(ID), times[0] / 1e3, CallTimes.median(times) / 1e3);
        }
    }

    private static String shorten(String glob) {
        return glob.length() <= 20 ? glob : glob.substring(0, 12) + "…(" + glob.length() + " chars)";
    }
}
