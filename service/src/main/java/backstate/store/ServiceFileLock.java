package backstate.store;

import java.io.IOException;
import java.nio.channels.FileChannel;
import java.nio.channels.FileLock;
import java.nio.channels.OverlappingFileLockException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardOpenOption;

/**
 * The one user of a SQLite database file that may change it on its own terms: the service, or
 * {@code migrate}. Each holds an exclusive lock on a file beside the database while it runs
 * ({@code backstate.db.service-lock}); the operating system drops it when the process ends, however
 * it ends. A second service on the same file would re-queue the first one's running jobs as left
 * by a crash, and {@code migrate} beside a live service would do the same and miss what the service
 * writes after its copy: both are refused instead. Within one JVM a second holder is refused too.
 */
public final class ServiceFileLock implements AutoCloseable {
    static final String SUFFIX = ".service-lock";

    private final FileChannel channel;
    private final FileLock lock;

    private ServiceFileLock(FileChannel channel, FileLock lock) {
        this.channel = channel;
        this.lock = lock;
    }

    /**
     * Takes the lock of {@code databaseFile} for {@code holder} ("a service", "migrate").
     *
     * @throws DatabaseInUseException when another process, or another holder in this one, has it
     */
    public static ServiceFileLock acquire(Path databaseFile, String holder) {
        Path real = realPath(databaseFile);
        Path file = real.resolveSibling(real.getFileName() + SUFFIX);
        FileChannel channel;
        try {
            channel = FileChannel.open(file, StandardOpenOption.CREATE, StandardOpenOption.WRITE);
        } catch (IOException e) {
            throw new StoreException("cannot open " + file + " to lock the database for " + holder + ": " + e.getMessage(), e);
        }
        FileLock lock;
        try {
            lock = channel.tryLock();
        } catch (OverlappingFileLockException | IOException e) {
            lock = null;
        }
        if (lock == null) {
            closeQuietly(channel);
            throw new DatabaseInUseException(databaseFile + " is in use by another backstate process (" + file
                    + " is locked): stop the service using it first");
        }
        return new ServiceFileLock(channel, lock);
    }

    /**
     * The file's path with every symbolic link resolved (of its folder when it does not exist yet), so
     * two names of one file through links share one lock; a hard link is refused at start instead
     * ({@link DatabaseFile#usable}).
     */
    static Path realPath(Path databaseFile) {
        Path absolute = databaseFile.toAbsolutePath().normalize();
        try {
            return Files.exists(absolute) ? absolute.toRealPath()
                    : absolute.getParent().toRealPath().resolve(absolute.getFileName());
        } catch (IOException e) {
            return absolute; // the open that follows reports what is wrong with the path
        }
    }

    @Override
    public void close() {
        try {
            lock.release();
        } catch (IOException e) {
            // The channel's close below releases it as well.
        }
        closeQuietly(channel);
    }

    private static void closeQuietly(FileChannel channel) {
        try {
            channel.close();
        } catch (IOException e) {
            // Nothing is written to the lock file; a failed close loses nothing.
        }
    }

    /** The database file is held by another service or {@code migrate}. */
    public static final class DatabaseInUseException extends StoreException {
        DatabaseInUseException(String message) {
            super(message, null);
        }
    }
}
