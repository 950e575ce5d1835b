package backstate.store;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.function.Predicate;

/**
 * The database path checked before SQLite opens it, so a start on a path the service cannot use
 * stops with the reason in words instead of SQLite's "unable to open database file". SQLite keeps
 * its {@code -wal} and {@code -shm} files beside the database, so the folder must be writable too.
 */
public final class DatabaseFile {
    private DatabaseFile() {
    }

    /** The absolute path, when the service can create or write the file; otherwise throws naming why. */
    public static Path usable(Path file) {
        return usable(file, Files::isWritable);
    }

    /**
     * As {@link #usable(Path)}, with the file system's answer to "may this process write here?"
     * given (tests stand in for a read-only file system, which root cannot otherwise be refused).
     *
     * @throws IllegalArgumentException naming the path and what is wrong with it
     */
    static Path usable(Path file, Predicate<Path> writable) {
        Path path = file.toAbsolutePath().normalize();
        Path folder = path.getParent();
        if (Files.isDirectory(path)) {
            throw refused(path, "is a folder, expected a file");
        }
        if (folder == null || !Files.exists(folder)) {
            throw refused(path, "its folder " + folder + " does not exist");
        }
        if (!Files.isDirectory(folder)) {
            throw refused(path, folder + " is not a folder");
        }
        int names = hardLinks(path);
        if (names > 1) {
            throw refused(path, "the file has " + names + " names (hard links): SQLite names its -wal and"
                    + " -shm files after the name it was opened by, so two names can write one file through two"
                    + " journals and damage it; keep one name (a symbolic link is fine)");
        }
        if (Files.exists(path) && !writable.test(path)) {
            throw refused(path, "the file is not writable (read-only file system or file permissions)");
        }
        if (!writable.test(folder)) {
            throw refused(path, "its folder " + folder + " is not writable (read-only file system or folder"
                    + " permissions); SQLite writes its -wal and -shm files there");
        }
        return path;
    }

    /** The file's number of names on a file system that counts them (POSIX); 1 where it does not, or no file. */
    static int hardLinks(Path path) {
        try {
            return Files.exists(path) ? ((Number) Files.getAttribute(path, "unix:nlink")).intValue() : 1;
        } catch (IOException | UnsupportedOperationException | IllegalArgumentException e) {
            return 1;
        }
    }

    private static IllegalArgumentException refused(Path path, String why) {
        return new IllegalArgumentException("database " + path + ": " + why);
    }
}
