package backstate.estimation;

import java.math.BigDecimal;
import java.util.function.DoubleFunction;

/**
 * Rejects a malformed model or trace before any work starts, naming the offending field. A refusal
 * of one time ({@link #ofTime}) keeps the time apart from its words, so a caller that knows what
 * the seconds count from can word it ({@link #withTimeWords}); the engine itself says seconds.
 */
public final class ModelException extends IllegalArgumentException {
    private final String field;
    private final String problem;
    /** The refused time in seconds, NaN when the refusal is not about one time. */
    private final double time;
    /** What follows the time in the problem: ", expected …". */
    private final String afterTime;

    public ModelException(String field, String problem) {
        this(field, problem, Double.NaN, null);
    }

    private ModelException(String field, String problem, double time, String afterTime) {
        super(field + ": " + problem);
        this.field = field;
        this.problem = problem;
        this.time = time;
        this.afterTime = afterTime;
    }

    /** "got &lt;time&gt;, expected &lt;expected&gt;", the time as plain seconds until {@link #withTimeWords worded}. */
    public static ModelException ofTime(String field, double time, String expected) {
        String after = ", expected " + expected;
        return new ModelException(field, "got " + seconds(time) + after, time, after);
    }

    /** This refusal with its time in {@code words} (e.g. RFC 3339); itself when it is not about one time. */
    public ModelException withTimeWords(DoubleFunction<String> words) {
        return Double.isNaN(time) ? this : new ModelException(field, "got " + words.apply(time) + afterTime, time, afterTime);
    }

    /** This refusal under another field name, its time kept. */
    public ModelException renamed(String newField) {
        return new ModelException(newField, problem, time, afterTime);
    }

    /** The offending field as a path, e.g. {@code a[2][1]} or {@code outputs[17][0]}. */
    public String field() {
        return field;
    }

    /** What is wrong with the field, without its name. */
    public String problem() {
        return problem;
    }

    /** Seconds as written by people: "1796083350 s", "0.5 s", not 1.79608335E9. */
    static String seconds(double t) {
        return Double.isFinite(t) ? BigDecimal.valueOf(t).stripTrailingZeros().toPlainString() + " s" : Double.toString(t);
    }
}
