package backstate.text;

import java.util.List;

/** Items joined for a sentence: "a", "a or b", "a, b or c" (no serial comma). */
public final class Listed {
    private Listed() {
    }

    /** @param conjunction the word before the last item, "and" or "or" */
    public static String of(List<String> items, String conjunction) {
        if (items.size() <= 1) {
            return String.join("", items);
        }
        return String.join(", ", items.subList(0, items.size() - 1)) + " " + conjunction + " " + items.get(items.size() - 1);
    }
}
