package backstate.text;

/** A count with its noun for messages: "1 row", "3 rows" (nouns whose plural adds an s). */
public final class Counted {
    private Counted() {
    }

    public static String of(long count, String singular) {
        return count + " " + (count == 1 ? singular : singular + "s");
    }
}
