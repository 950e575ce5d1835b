package backstate.text;

import java.math.BigDecimal;
import java.math.MathContext;
import java.util.Locale;

/** A number as a sentence shows it: "10.9", "0.000123", "1.2e-7"; {@link #exact} for values a user typed. */
public final class Figure {
    private static final MathContext THREE_DIGITS = new MathContext(3);

    private Figure() {
    }

    /** Three significant digits, no trailing zeros; plain from 0.001 to below 10⁶, powers of ten outside. */
    public static String of(double value) {
        if (!Double.isFinite(value)) {
            return Double.toString(value);
        }
        if (value == 0.0) {
            return "0";
        }
        double magnitude = Math.abs(value);
        if (magnitude >= 1e-3 && magnitude < 1e6) {
            return new BigDecimal(value).round(THREE_DIGITS).stripTrailingZeros().toPlainString();
        }
        String[] parts = String.format(Locale.ROOT, "%.2e", value).split("e");
        String mantissa = new BigDecimal(parts[0]).stripTrailingZeros().toPlainString();
        return mantissa + "e" + Integer.parseInt(parts[1]);
    }

    /**
     * The shortest decimal that reads back as the value, in plain digits, never in powers of ten:
     * "1796205660.25", "0.0000001", "60"; a value not finite as Java writes it.
     */
    public static String plain(double value) {
        return Double.isFinite(value) ? BigDecimal.valueOf(value).stripTrailingZeros().toPlainString() : Double.toString(value);
    }

    /** Every digit of the value, without a trailing ".0" on whole numbers: "3600", "0.25". */
    public static String exact(double value) {
        if (value == Math.rint(value) && Math.abs(value) < 1e15) {
            return Long.toString((long) value);
        }
        return Double.toString(value);
    }
}
