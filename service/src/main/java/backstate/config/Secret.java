package backstate.config;

/** A setting that must never be printed: its {@code toString} is redacted, so logging Settings cannot leak it. */
public record Secret(String value) {
    @Override
    public String toString() {
        return "[redacted]";
    }
}
