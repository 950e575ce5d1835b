package backstate.reliability;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.OffsetDateTime;
import java.time.format.DateTimeFormatter;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * The server's JVM log, written with
 * {@code -Xlog:gc,safepoint,jit+compilation=debug:file=F:time,tags}: each line's wall-clock time,
 * tags and message, so the load driver can count GC pauses, safepoints and JIT compilations
 * between two instants. Line formats are HotSpot 17's unified logging (JEP 158).
 */
final class JvmLog {
    /** {@code [2026-12-02T12:39:17.603+0000][gc          ] GC(0) Pause Young ... 26.784ms}. */
    private static final Pattern LINE = Pattern.compile("^\\[([^]]+)]\\[([^]]+)]\\s?(.*)$");
    private static final DateTimeFormatter TIME = DateTimeFormatter.ofPattern("yyyy-MM-dd'T'HH:mm:ss.SSSZ");
    /** A stop-the-world GC pause ends with its length: {@code ... Pause Remark 22M->21M(77M) 7.288ms}. */
    private static final Pattern GC_PAUSE = Pattern.compile("Pause .* ([0-9.]+)ms$");
    /** {@code Safepoint "Cleanup", Time since last: ..., Reaching safepoint: ... ns, At safepoint: ... ns, Total: 3235 ns}. */
    private static final Pattern SAFEPOINT = Pattern.compile("^Safepoint \"([^\"]+)\".*Total: (\\d+) ns");

    /** Something that took {@code millis} at {@code epochMillis}: a pause, a safepoint, or a compilation (0 ms). */
    record Event(long epochMillis, double millis, String what) {
    }

    final List<Event> gcPauses = new ArrayList<>();
    final List<Event> safepoints = new ArrayList<>();
    final List<Event> compilations = new ArrayList<>();

    /** The events of {@code file}; none when it does not exist (a server started without the flag). */
    static JvmLog read(Path fileOrNull) throws IOException {
        JvmLog log = new JvmLog();
        if (fileOrNull == null || !Files.exists(fileOrNull)) {
            return log;
        }
        for (String line : Files.readAllLines(fileOrNull)) {
            Matcher m = LINE.matcher(line);
            if (m.matches()) {
                log.add(OffsetDateTime.parse(m.group(1), TIME).toInstant().toEpochMilli(), m.group(2).trim(), m.group(3));
            }
        }
        return log;
    }

    private void add(long at, String tags, String message) {
        if (tags.equals("gc")) {
            Matcher pause = GC_PAUSE.matcher(message);
            if (pause.find()) {
                gcPauses.add(new Event(at, Double.parseDouble(pause.group(1)), message));
            }
        } else if (tags.equals("safepoint")) {
            Matcher sp = SAFEPOINT.matcher(message);
            if (sp.find()) {
                safepoints.add(new Event(at, Long.parseLong(sp.group(2)) / 1e6, sp.group(1)));
            }
        } else if (tags.equals("jit,compilation")) {
            compilations.add(new Event(at, 0, message));
        }
    }

    /** Count, total and longest of the events in [from, to) epoch milliseconds. */
    record Tally(int count, double totalMillis, double longestMillis) {
        static Tally of(List<Event> events, long from, long to) {
            int n = 0;
            double total = 0;
            double longest = 0;
            for (Event e : events) {
                if (e.epochMillis() >= from && e.epochMillis() < to) {
                    n++;
                    total += e.millis();
                    longest = Math.max(longest, e.millis());
                }
            }
            return new Tally(n, total, longest);
        }
    }
}
