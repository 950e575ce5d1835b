package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Each reason a database path cannot be used, in words, before SQLite is asked to open it. */
class DatabaseFileTest {
    @TempDir
    Path dir;

    static String refusal(Path file, java.util.function.Predicate<Path> writable) {
        return assertThrows(IllegalArgumentException.class, () -> DatabaseFile.usable(file, writable)).getMessage();
    }

    @Test
    void a_new_file_in_a_writable_folder_and_an_existing_writable_file_are_usable() throws Exception {
        Path fresh = dir.resolve("fresh.db");
        assertEquals(fresh, DatabaseFile.usable(fresh));
        Path existing = Files.createFile(dir.resolve("existing.db"));
        assertEquals(existing, DatabaseFile.usable(existing));
    }

    @Test
    void a_folder_a_missing_folder_and_a_file_as_folder_are_refused_by_name() throws Exception {
        assertEquals("database " + dir + ": is a folder, expected a file", refusal(dir, p -> true));
        Path missing = dir.resolve("missing/b.db");
        assertEquals("database " + missing + ": its folder " + missing.getParent() + " does not exist",
                refusal(missing, p -> true));
        Path file = Files.createFile(dir.resolve("plain"));
        assertEquals("database " + file.resolve("b.db") + ": " + file + " is not a folder",
                refusal(file.resolve("b.db"), p -> true));
    }

    @Test
    void on_a_read_only_file_system_both_an_existing_file_and_a_new_one_are_refused() throws Exception {
        // The file system's answer is stood in for: as root, only a read-only mount refuses a write.
        Path existing = Files.createFile(dir.resolve("kept.db"));
        assertEquals("database " + existing + ": the file is not writable (read-only file system or file permissions)",
                refusal(existing, p -> false));
        Path fresh = dir.resolve("new.db");
        assertEquals("database " + fresh + ": its folder " + dir + " is not writable (read-only file system or folder"
                + " permissions); SQLite writes its -wal and -shm files there", refusal(fresh, p -> false));
        assertEquals("database " + existing + ": its folder " + dir + " is not writable (read-only file system or folder"
                + " permissions); SQLite writes its -wal and -shm files there", refusal(existing, p -> !p.equals(dir)));
    }

    @Test
    void a_relative_path_is_made_absolute() {
        Path relative = Path.of("backstate-test-relative.db");
        assertEquals(relative.toAbsolutePath(), DatabaseFile.usable(relative));
    }

    @Test
    void a_file_with_two_names_is_refused_and_two_names_through_a_symbolic_link_share_one_lock() throws Exception {
        Path file = Files.createFile(dir.resolve("one.db"));
        Path second = Files.createLink(dir.resolve("two.db"), file);
        assertEquals("database " + file + ": the file has 2 names (hard links): SQLite names its -wal and -shm files"
                + " after the name it was opened by, so two names can write one file through two journals and damage it;"
                + " keep one name (a symbolic link is fine)", refusal(file, p -> true));
        Files.delete(second);
        assertEquals(file, DatabaseFile.usable(file));
        Path link = Files.createSymbolicLink(dir.resolve("link.db"), file);
        try (ServiceFileLock held = ServiceFileLock.acquire(file, "a service")) {
            assertThrows(ServiceFileLock.DatabaseInUseException.class, () -> ServiceFileLock.acquire(link, "a service"));
        }
    }
}
