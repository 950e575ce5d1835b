package backstate.store;

/** Precondition checks whose messages say what was got and what was expected. */
final class Expect {

    private Expect() {
    }

    static void notNull(String name, Object value) {
        if (value == null) {
            throw new IllegalArgumentException("got null " + name + ", expected a value");
        }
    }

    static void notBlank(String name, String value) {
        if (value == null || value.isBlank()) {
            throw new IllegalArgumentException("got " + name + " '" + value + "', expected non-blank text");
        }
    }

    static void atLeast(String name, int value, int minimum) {
        if (value < minimum) {
            throw new IllegalArgumentException("got " + name + " " + value + ", expected >= " + minimum);
        }
    }

    static void window(double start, double end) {
        if (!Double.isFinite(start) || !Double.isFinite(end) || end < start) {
            throw new IllegalArgumentException("got window [" + start + ", " + end
                    + "], expected finite bounds with start <= end");
        }
    }

    /** Flags are stored comma-separated, so a flag must be non-empty and free of commas. */
    static void flag(String flag) {
        if (flag == null || flag.isEmpty() || flag.contains(",")) {
            throw new IllegalArgumentException("got flag '" + flag + "', expected non-empty text without commas");
        }
    }
}
