package backstate.estimation;

import backstate.text.Figure;
import java.util.function.DoubleFunction;

/**
 * Rejects a malformed model or trace before any work starts, naming the offending field. A refusal
 * of a time ({@link #ofTime}) keeps the times it names apart from their words, so a caller that
 * knows what the seconds count from can word them ({@link #withTimeWords}, e.g. RFC 3339); the
 * engine itself says seconds.
 */
public final class ModelException extends IllegalArgumentException {
    private final String field;
    private final String problem;
    /** The refused time, then the times the expectation names, in seconds; null when the refusal is not about a time. */
    private final double[] times;
    /** "got %s, expected …", one %s per time. */
    private final String template;

    public ModelException(String field, String problem) {
        this(field, problem, null, null);
    }

    private ModelException(String field, String problem, double[] times, String template) {
        super(field + ": " + problem);
        this.field = field;
        this.problem = problem;
        this.times = times;
        this.template = template;
    }

    /**
     * "got &lt;time&gt;, expected &lt;expected&gt;", where each %s in {@code expected} stands for one of
     * {@code named} (e.g. the window's ends); every time in plain seconds until {@link #withTimeWords worded}.
     */
    public static ModelException ofTime(String field, double time, String expected, double... named) {
        double[] all = new double[named.length + 1];
        all[0] = time;
        System.arraycopy(named, 0, all, 1, named.length);
        String template = "got %s, expected " + expected;
        return new ModelException(field, worded(template, all, ModelException::seconds), all, template);
    }

    /** This refusal with its times in {@code words} (e.g. RFC 3339); itself when it is not about a time. */
    public ModelException withTimeWords(DoubleFunction<String> words) {
        return times == null ? this : new ModelException(field, worded(template, times, words), times, template);
    }

    /** This refusal under another field name, its times kept. */
    public ModelException renamed(String newField) {
        return new ModelException(newField, problem, times, template);
    }

    /** The template with its i-th "%s" replaced by the i-th time's words (no other % is read, so any text is safe). */
    private static String worded(String template, double[] times, DoubleFunction<String> words) {
        String[] pieces = template.split("%s", -1);
        if (pieces.length != times.length + 1) {
            throw new IllegalArgumentException("got " + (pieces.length - 1) + " %s in \"" + template + "\", expected "
                    + times.length + ", one per time");
        }
        StringBuilder out = new StringBuilder(pieces[0]);
        for (int i = 0; i < times.length; i++) {
            out.append(words.apply(times[i])).append(pieces[i + 1]);
        }
        return out.toString();
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
        return Double.isFinite(t) ? Figure.plain(t) + " s" : Double.toString(t);
    }
}
