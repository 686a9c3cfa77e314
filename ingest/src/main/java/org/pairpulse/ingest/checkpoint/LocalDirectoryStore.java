package org.pairpulse.ingest.checkpoint;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.ByteBuffer;
import java.nio.channels.FileChannel;
import java.nio.file.AtomicMoveNotSupportedException;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.nio.file.StandardOpenOption;
import java.util.Objects;
import java.util.Optional;

/**
 * Single-node checkpoints: one file per input partition in a local directory, replaced by atomic rename.
 *
 * <p>A save writes {@code .<name>.tmp}, forces it to disk, renames it over {@code <topic>-<partition>.ckpt}
 * with {@code ATOMIC_MOVE}, then forces the directory: a crash leaves either the old checkpoint or the new
 * one, never a mixture. A checkpoint that fails its checksum is an error, never silently skipped.
 */
public final class LocalDirectoryStore {
  private final Path directory;

  public LocalDirectoryStore(Path directory) {
    this.directory = Objects.requireNonNull(directory, "directory");
    try {
      Files.createDirectories(directory);
    } catch (IOException e) {
      throw new UncheckedIOException("cannot create checkpoint directory " + directory, e);
    }
  }

  public Path directory() {
    return directory;
  }

  /** The file of one partition. */
  public Path fileOf(String topic, int partition) {
    return directory.resolve(topic + "-" + partition + ".ckpt");
  }

  /** Writes {@code checkpoint} atomically; returns the bytes written. */
  public long save(PartitionCheckpoint checkpoint) {
    Path target = fileOf(checkpoint.topic(), checkpoint.partition());
    Path temp = directory.resolve("." + target.getFileName() + ".tmp");
    byte[] bytes = checkpoint.encode();
    try {
      try (FileChannel channel = FileChannel.open(temp, StandardOpenOption.CREATE, StandardOpenOption.WRITE,
          StandardOpenOption.TRUNCATE_EXISTING)) {
        ByteBuffer buffer = ByteBuffer.wrap(bytes);
        while (buffer.hasRemaining()) {
          channel.write(buffer);
        }
        channel.force(true);
      }
      try {
        Files.move(temp, target, StandardCopyOption.ATOMIC_MOVE, StandardCopyOption.REPLACE_EXISTING);
      } catch (AtomicMoveNotSupportedException e) {
        throw new IOException("the checkpoint directory " + directory + " does not support atomic rename", e);
      }
      forceDirectory();
      return bytes.length;
    } catch (IOException e) {
      throw new UncheckedIOException("cannot write checkpoint " + target, e);
    }
  }

  /** The partition's checkpoint, or empty if there is none. */
  public Optional<PartitionCheckpoint> load(String topic, int partition) {
    Path file = fileOf(topic, partition);
    try {
      return Optional.of(PartitionCheckpoint.decode(Files.readAllBytes(file)));
    } catch (NoSuchFileException e) {
      return Optional.empty();
    } catch (IOException e) {
      throw new UncheckedIOException("cannot read checkpoint " + file, e);
    }
  }

  private void forceDirectory() {
    try (FileChannel dir = FileChannel.open(directory, StandardOpenOption.READ)) {
      dir.force(true);
    } catch (IOException | UnsupportedOperationException e) {
      // some platforms cannot open a directory for sync; the rename itself is still atomic
    }
  }
}
