package dev.heapherd.render;

import dev.heapherd.input.InputException;
import java.io.IOException;
import java.nio.file.AtomicMoveNotSupportedException;
import java.nio.file.Files;
import java.nio.file.LinkOption;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * Writes a set of files under one folder all or nothing, as far as a file system allows: every
 * target is checked first (inside the folder, no symbolic link on the way, writable), every file is
 * written to a temporary beside its target, and only then are the temporaries renamed over the
 * targets. A failure before the renames leaves every target as it was.
 */
public final class FolderWriter {

  private static final String TEMPORARY_PREFIX = ".heapherd-";

  /** The last step of a write: a temporary renamed over its target. */
  @FunctionalInterface
  interface Rename {
    void apply(Path temporary, Path target) throws IOException;
  }

  private final Path root;
  private final Rename rename;
  private final Map<Path, byte[]> pending = new LinkedHashMap<>();

  /** A writer for files under {@code root}, which need not exist yet. */
  public FolderWriter(Path root) {
    this(root, FolderWriter::move);
  }

  /**
   * A writer renaming with {@code rename}: tests make a rename fail as no file system lets them.
   */
  FolderWriter(Path root, Rename rename) {
    this.root = root.toAbsolutePath().normalize();
    this.rename = rename;
  }

  /** Adds {@code relative} with {@code content}; a file already equal to it is left alone. */
  public void add(String relative, byte[] content) throws InputException {
    Path target = root.resolve(relative).normalize();
    if (!target.startsWith(root) || target.equals(root)) {
      throw new InputException(relative, "", "is outside the folder " + root + "; not written");
    }
    checkNoLink(target);
    try {
      if (Files.isRegularFile(target, LinkOption.NOFOLLOW_LINKS)
          && Arrays.equals(Files.readAllBytes(target), content)) {
        return;
      }
    } catch (IOException e) {
      throw new InputException(target.toString(), "", "cannot read: " + e.getMessage());
    }
    pending.put(target, content);
  }

  /** Writes every added file; on failure before the renames nothing has changed. */
  public void commit() throws InputException {
    for (Path target : pending.keySet()) {
      checkWritable(target);
    }
    Map<Path, Path> temporaries = new LinkedHashMap<>();
    try {
      for (var entry : pending.entrySet()) {
        Path parent = entry.getKey().getParent();
        Files.createDirectories(parent);
        Path temporary = Files.createTempFile(parent, TEMPORARY_PREFIX, ".tmp");
        temporaries.put(entry.getKey(), temporary);
        Files.write(temporary, entry.getValue());
      }
    } catch (IOException e) {
      deleteAll(temporaries.values());
      throw new InputException(
          root.toString(), "", "cannot write, nothing was changed: " + e.getMessage());
    }
    List<Path> renamed = new ArrayList<>();
    for (var entry : temporaries.entrySet()) {
      try {
        rename.apply(entry.getValue(), entry.getKey());
        renamed.add(entry.getKey());
      } catch (IOException e) {
        deleteAll(temporaries.values());
        throw new InputException(
            entry.getKey().toString(),
            "",
            "cannot write ("
                + e.getMessage()
                + "); written before it: "
                + (renamed.isEmpty() ? "none" : renamed.toString()));
      }
    }
    pending.clear();
  }

  private static void move(Path from, Path to) throws IOException {
    try {
      Files.move(from, to, StandardCopyOption.ATOMIC_MOVE, StandardCopyOption.REPLACE_EXISTING);
    } catch (AtomicMoveNotSupportedException e) {
      Files.move(from, to, StandardCopyOption.REPLACE_EXISTING);
    }
  }

  /** Refuses a target with a symbolic link anywhere between the folder and itself. */
  private void checkNoLink(Path target) throws InputException {
    Path at = root;
    for (Path part : root.relativize(target)) {
      at = at.resolve(part);
      if (Files.isSymbolicLink(at)) {
        throw new InputException(
            at.toString(),
            "",
            "is a symbolic link; heapherd does not write through links, so that nothing outside"
                + " the folder changes: replace it with a plain file or folder");
      }
    }
  }

  private static void checkWritable(Path target) throws InputException {
    Path existing = target;
    while (existing != null && !Files.exists(existing, LinkOption.NOFOLLOW_LINKS)) {
      existing = existing.getParent();
    }
    if (existing == null) {
      throw new InputException(target.toString(), "", "cannot write: no such folder");
    }
    if (existing.equals(target)) {
      if (!Files.isRegularFile(target, LinkOption.NOFOLLOW_LINKS)) {
        throw new InputException(target.toString(), "", "cannot write: not a regular file");
      }
      // The rename needs the folder writable; the file's own mode guards against mistakes.
      if (!Files.isWritable(target) || !Files.isWritable(target.getParent())) {
        throw new InputException(
            target.toString(), "", "cannot write: permission denied; nothing was changed");
      }
    } else if (!Files.isDirectory(existing) || !Files.isWritable(existing)) {
      throw new InputException(
          existing.toString(), "", "cannot write into it: permission denied; nothing was changed");
    }
  }

  private static void deleteAll(Iterable<Path> temporaries) {
    for (Path p : temporaries) {
      try {
        Files.deleteIfExists(p);
      } catch (IOException e) {
        // A leftover temporary is hidden (dot name) and harmless; the error already reported
        // says what went wrong.
      }
    }
  }
}
