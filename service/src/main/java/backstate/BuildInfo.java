package backstate;

import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.util.Properties;

/** What this build is: its version, from {@code backstate/build.properties}, which the build writes. */
public final class BuildInfo {
    /** Shown when the classes run without the build's resources (an IDE's own compile). */
    static final String UNKNOWN = "unknown";
    private static final String VERSION = read();

    private BuildInfo() {
    }

    /** The project version this jar was built as, e.g. "0.1.0-SNAPSHOT". */
    public static String version() {
        return VERSION;
    }

    private static String read() {
        try (InputStream in = BuildInfo.class.getResourceAsStream("/backstate/build.properties")) {
            if (in == null) {
                return UNKNOWN;
            }
            Properties properties = new Properties();
            properties.load(in);
            String version = properties.getProperty("version", UNKNOWN);
            return version.startsWith("${") ? UNKNOWN : version;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
