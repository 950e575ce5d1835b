package backstate;

import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.util.Properties;

/** What this build is: its version, from {@code backstate/build.properties}, which the build writes. */
public final class BuildInfo {
    /** Shown when the classes run without the build's resources (an IDE's own compile). */
    static final String UNKNOWN = "unknown";
    private static final String VERSION = read("version");
    private static final String BUILT = read("built");

    private BuildInfo() {
    }

    /** The project version this jar was built as, e.g. "0.1.0-SNAPSHOT". */
    public static String version() {
        return VERSION;
    }

    /**
     * This build, one word: the version and when it was built ("0.1.0-SNAPSHOT+20261203T144500Z"),
     * so two builds of one version differ (entity tags must not outlive the code that made them).
     */
    public static String build() {
        return VERSION + "+" + BUILT;
    }

    private static String read(String key) {
        try (InputStream in = BuildInfo.class.getResourceAsStream("/backstate/build.properties")) {
            if (in == null) {
                return UNKNOWN;
            }
            Properties properties = new Properties();
            properties.load(in);
            String value = properties.getProperty(key, UNKNOWN);
            return value.startsWith("${") ? UNKNOWN : value;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
