package backstate.reliability;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.stream.Stream;

/**
 * CPU seconds a process's threads have used, grouped by what the thread does (from its name in
 * {@code /proc/PID/task/TID/comm}, at most 15 characters): the JVM's GC and JIT compiler threads,
 * the service's writer, checkpointer and job threads, the HTTP server's threads, and the rest.
 * Linux only; empty where /proc is missing. Fields 14 and 15 of {@code stat} are user and system
 * time in clock ticks (proc(5)).
 */
final class ThreadCpu {
    /** Name prefixes of each group, first match wins; HotSpot's thread names as of JDK 17. */
    private static final List<Map.Entry<String, List<String>>> GROUPS = List.of(
            Map.entry("GC", List.of("GC Thread", "G1 ", "VM Periodic")),
            Map.entry("JIT", List.of("C1 CompilerThre", "C2 CompilerThre")),
            Map.entry("writer", List.of("backstate-write")),
            Map.entry("checkpoint", List.of("backstate-check")),
            Map.entry("jobs", List.of("backstate-worke", "backstate-dispa", "backstate-lease")),
            Map.entry("http", List.of("JettyServerThre", "qtp", "Jetty")));
    /** USER_HZ on Linux: 100 ticks a second on every architecture the service runs on. */
    private static final double TICKS_PER_SECOND = 100;

    private ThreadCpu() {
    }

    /** Seconds by group, in the order of {@link #GROUPS} then "other". */
    static Map<String, Double> of(long pid) {
        Map<String, Double> seconds = new LinkedHashMap<>();
        GROUPS.forEach(g -> seconds.put(g.getKey(), 0.0));
        seconds.put("other", 0.0);
        Path tasks = Path.of("/proc", Long.toString(pid), "task");
        try (Stream<Path> threads = Files.list(tasks)) {
            threads.forEach(t -> add(seconds, t));
        } catch (IOException | RuntimeException e) {
            return Map.of();
        }
        return seconds;
    }

    private static void add(Map<String, Double> seconds, Path thread) {
        try {
            String name = Files.readString(thread.resolve("comm")).strip();
            String stat = Files.readString(thread.resolve("stat"));
            // The name in stat is in parentheses and may hold spaces: count fields after its ')'.
            String[] f = stat.substring(stat.lastIndexOf(')') + 2).split(" ");
            double cpu = (Long.parseLong(f[11]) + Long.parseLong(f[12])) / TICKS_PER_SECOND;
            seconds.merge(groupOf(name), cpu, Double::sum);
        } catch (IOException | RuntimeException e) {
            // The thread ended between the listing and the read: its time is gone from /proc too.
        }
    }

    private static String groupOf(String name) {
        for (Map.Entry<String, List<String>> g : GROUPS) {
            if (g.getValue().stream().anyMatch(name::startsWith)) {
                return g.getKey();
            }
        }
        return "other";
    }
}
