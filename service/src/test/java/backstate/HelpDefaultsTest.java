package backstate;

import static org.junit.jupiter.api.Assertions.assertEquals;

import backstate.config.Settings;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;

/** Every default `serve --help` states is the one the service starts with (an empty environment, no flags). */
class HelpDefaultsTest {
    private static final Pattern FLAG_DEFAULT = Pattern.compile("--([a-z-]+) .*default (\\d+)\\)");

    @Test
    void each_numeric_default_in_the_help_is_the_settings_default() {
        Settings s = Settings.from(new String[0], Map.of());
        Map<String, Long> actual = new LinkedHashMap<>();
        actual.put("port", (long) s.port());
        actual.put("max-body-bytes", s.maxBodyBytes());
        actual.put("max-queued", (long) s.maxQueued());
        actual.put("max-samples", (long) s.maxSamples());
        actual.put("series-threads", (long) s.seriesThreads());
        actual.put("series-queue", (long) s.seriesQueue());
        actual.put("job-lease", s.jobLease().toSeconds());
        actual.put("database-pool", (long) s.databasePool());
        actual.put("max-uploads", (long) s.uploads().maxUploads());
        actual.put("max-uploads-per-key", (long) s.uploads().maxUploadsPerKey());
        actual.put("min-body-rate", (long) s.uploads().minBodyRate());
        actual.put("max-body-seconds", s.uploads().maxBodyTime().toSeconds());
        Map<String, Long> stated = new LinkedHashMap<>();
        Matcher m = FLAG_DEFAULT.matcher(Launcher.SERVICE_FLAGS);
        while (m.find()) {
            stated.put(m.group(1), Long.parseLong(m.group(2)));
        }
        assertEquals(actual, stated);
    }
}
