package dev.interim.embedded;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.channels.FileChannel;
import java.nio.channels.FileLock;
import java.nio.channels.OverlappingFileLockException;
import java.nio.file.Path;
import java.nio.file.StandardOpenOption;

/**
 * An exclusive lock on a data directory, held for the life of an embedded broker. Kafka locks its
 * log directory only when the broker part starts, after the controller part has opened the
 * metadata log in the same directory: a second broker on a directory in use writes into the first
 * one's files (with Kafka 4.4: its checkpoints) and then waits minutes to shut down. This lock
 * refuses it before anything is touched.
 */
final class DataDirLock implements AutoCloseable {
    static final String FILE_NAME = "interim.lock";

    private final FileChannel channel;
    private final FileLock lock;

    private DataDirLock(FileChannel channel, FileLock lock) {
        this.channel = channel;
        this.lock = lock;
    }

    /** Locks {@code dataDir} (which must exist), or fails at once if it is already locked. */
    static DataDirLock acquire(Path dataDir) throws IOException {
        FileChannel channel = FileChannel.open(dataDir.resolve(FILE_NAME),
                StandardOpenOption.CREATE, StandardOpenOption.WRITE);
        FileLock lock;
        try {
            lock = channel.tryLock();
        } catch (OverlappingFileLockException e) {
            channel.close();
            throw new IllegalStateException("data directory " + dataDir
                    + " is in use by an embedded Kafka broker in this process", e);
        } catch (IOException | RuntimeException e) {
            channel.close();
            throw e;
        }
        if (lock == null) {
            channel.close();
            throw new IllegalStateException("data directory " + dataDir
                    + " is in use by an embedded Kafka broker in another process");
        }
        return new DataDirLock(channel, lock);
    }

    @Override
    public void close() {
        try {
            lock.release();
            channel.close();
        } catch (IOException e) {
            throw new UncheckedIOException("cannot release the lock on " + FILE_NAME, e);
        }
    }
}
