package backstate;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Pattern;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;

/**
 * The one-way package rules of DEVELOPERS.md (Layout), read from the source files: store may
 * depend on jobs, never the reverse; estimation is pure numerics. A reference counts whether it is
 * an import or a fully qualified name in code; comments do not count.
 */
class PackageDependenciesTest {
    /** Surefire runs in the service module's folder. */
    private static final Path SOURCES = Path.of("src", "main", "java", "backstate");

    private static final List<String> NOT_FOR_JOBS = List.of("backstate.store");
    private static final List<String> NOT_FOR_ESTIMATION = List.of("backstate.store", "backstate.api",
            "backstate.jobs", "backstate.formats", "io.javalin", "com.fasterxml", "java.sql");

    private static final Pattern COMMENTS = Pattern.compile("(?s)/\\*.*?\\*/|//[^\\n]*");

    @Test
    void jobs_never_refers_to_the_store() throws IOException {
        assertEquals(List.of(), violations("jobs", NOT_FOR_JOBS));
    }

    @Test
    void estimation_refers_to_no_store_api_jobs_formats_http_json_or_sql() throws IOException {
        assertEquals(List.of(), violations("estimation", NOT_FOR_ESTIMATION));
    }

    @Test
    void the_check_finds_imports_and_qualified_names_but_not_comments_or_longer_names() {
        assertEquals(List.of("backstate.store"), referencesIn("import backstate.store.TraceRef;\nclass A {}", NOT_FOR_JOBS));
        assertEquals(List.of("backstate.store"), referencesIn("import backstate.store.*;", NOT_FOR_JOBS));
        assertEquals(List.of("backstate.store"),
                referencesIn("class A { backstate.store.TraceRef ref; }", NOT_FOR_JOBS));
        assertEquals(List.of("com.fasterxml", "java.sql"),
                referencesIn("import com.fasterxml.jackson.databind.ObjectMapper;\nimport java.sql.Connection;",
                        NOT_FOR_ESTIMATION));
        assertEquals(List.of(), referencesIn("/** see {@link backstate.store.TraceRef} */\n"
                + "// backstate.store.Database\nclass A {}", NOT_FOR_JOBS));
        assertEquals(List.of(), referencesIn("import backstate.stores.Other;\nimport my.backstate.store.X;", NOT_FOR_JOBS));
    }

    @Test
    void the_scanned_packages_hold_the_classes_the_rules_are_about() throws IOException {
        // Guards against the rules passing by reading an empty or misplaced folder.
        assertTrue(sources("jobs").stream().anyMatch(p -> p.endsWith("JobQueue.java")), "jobs/JobQueue.java not found");
        assertTrue(sources("estimation").stream().anyMatch(p -> p.endsWith("InitialStateEstimator.java")),
                "estimation/InitialStateEstimator.java not found");
    }

    private static List<String> violations(String pkg, List<String> forbidden) throws IOException {
        List<String> found = new ArrayList<>();
        for (Path file : sources(pkg)) {
            for (String reference : referencesIn(Files.readString(file), forbidden)) {
                found.add(SOURCES.relativize(file) + " refers to " + reference);
            }
        }
        return found;
    }

    private static List<Path> sources(String pkg) throws IOException {
        Path folder = SOURCES.resolve(pkg);
        try (Stream<Path> files = Files.walk(folder)) {
            List<Path> java = files.filter(p -> p.toString().endsWith(".java")).sorted().toList();
            assertFalse(java.isEmpty(), "no .java files under " + folder.toAbsolutePath());
            return java;
        }
    }

    /** The forbidden package prefixes that the source refers to outside comments, in the given order. */
    static List<String> referencesIn(String source, List<String> forbidden) {
        String code = COMMENTS.matcher(source).replaceAll(" ");
        return forbidden.stream()
                .filter(prefix -> Pattern.compile("(?<![\\w.])" + Pattern.quote(prefix) + "(?![\\w])").matcher(code).find())
                .toList();
    }
}
