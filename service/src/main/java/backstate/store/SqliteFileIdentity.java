package backstate.store;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.nio.file.attribute.BasicFileAttributes;
import java.util.Objects;

/**
 * The database file the service opened, by the file system's identity of it (device and inode on
 * Linux, {@link BasicFileAttributes#fileKey}). SQLite keeps writing to an open file that was
 * deleted or replaced under it, and those writes are gone at the next start; so every write is
 * checked, after its commit and before it is acknowledged, to have gone to the file the path
 * still names. Costs one stat a write.
 */
final class SqliteFileIdentity {
    private final Path path;
    private final Object key;

    private SqliteFileIdentity(Path path, Object key) {
        this.path = path;
        this.key = key;
    }

    /** The identity of the file at {@code path} now; null where the file system gives none (no check then). */
    static SqliteFileIdentity of(Path path) {
        Object key = keyOrNull(path);
        return key == null ? null : new SqliteFileIdentity(path, key);
    }

    /** Refuses, as the store unavailable, when the path no longer names the file opened. */
    void requireSame() {
        Object now = keyOrNull(path);
        if (!Objects.equals(key, now)) {
            throw new StoreUnavailableException("database file " + (now == null ? "removed" : "replaced"), new IllegalStateException(
                    path + " was " + (now == null ? "deleted" : "replaced by another file")
                    + " while the service had it open: writes to it would be lost at the next start; restore the"
                    + " file (or restart on a new one) and restart the service"));
        }
    }

    /** True while the path names the file opened. */
    boolean same() {
        return Objects.equals(key, keyOrNull(path));
    }

    private static Object keyOrNull(Path path) {
        try {
            return Files.readAttributes(path, BasicFileAttributes.class).fileKey();
        } catch (NoSuchFileException gone) {
            return null;
        } catch (IOException unreadable) {
            return null;
        }
    }
}
