package dev.heapherd.render;

import dev.heapherd.input.InputException;
import java.io.IOException;
import java.nio.charset.CharacterCodingException;
import java.nio.file.FileVisitResult;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.SimpleFileVisitor;
import java.nio.file.attribute.BasicFileAttributes;
import java.util.ArrayList;
import java.util.List;

/** The files of a folder of Kubernetes manifests. */
public final class ManifestFolder {

  /** Endings of the files read as manifests; kubectl apply -f reads the same three. */
  private static final List<String> MANIFEST_ENDINGS = List.of(".yaml", ".yml", ".json");

  /** Names starting with a dot (.git, .github) hold no manifests and are skipped. */
  private static final String HIDDEN = ".";

  private ManifestFolder() {}

  /**
   * Every regular file under {@code dir}, as '/' separated paths relative to it, sorted; hidden
   * files and folders are left out.
   */
  public static List<String> files(Path dir) throws InputException {
    if (!Files.exists(dir)) {
      throw new InputException(dir.toString(), "", "no such folder");
    }
    if (!Files.isDirectory(dir)) {
      throw new InputException(dir.toString(), "", "is not a folder");
    }
    List<String> out = new ArrayList<>();
    try {
      Files.walkFileTree(
          dir,
          new SimpleFileVisitor<>() {
            @Override
            public FileVisitResult preVisitDirectory(Path d, BasicFileAttributes attributes) {
              return !d.equals(dir) && hidden(d)
                  ? FileVisitResult.SKIP_SUBTREE
                  : FileVisitResult.CONTINUE;
            }

            @Override
            public FileVisitResult visitFile(Path file, BasicFileAttributes attributes)
                throws IOException {
              if (hidden(file)) {
                return FileVisitResult.CONTINUE;
              }
              if (attributes.isSymbolicLink()) {
                // Skipping it would drop its workloads from the plan unseen; following it could
                // read, and later write, outside the folder.
                throw new LinkFound(file);
              }
              if (attributes.isRegularFile()) {
                out.add(relative(dir, file));
              }
              return FileVisitResult.CONTINUE;
            }
          });
    } catch (LinkFound e) {
      throw new InputException(
          e.link.toString(),
          "",
          "is a symbolic link; heapherd reads and writes only plain files inside the folder:"
              + " replace the link with the file, or move it out of the folder");
    } catch (IOException e) {
      throw new InputException(dir.toString(), "", "cannot read: " + e.getMessage());
    }
    out.sort(null);
    return out;
  }

  /** Whether {@code relative} is read as a manifest. */
  public static boolean isManifest(String relative) {
    return MANIFEST_ENDINGS.stream().anyMatch(relative::endsWith);
  }

  /** Reads and parses the manifests among {@code files}, in their order. */
  public static List<ManifestFile> read(Path dir, List<String> files) throws InputException {
    List<ManifestFile> out = new ArrayList<>();
    for (String relative : files) {
      if (!isManifest(relative)) {
        continue;
      }
      Path file = dir.resolve(relative);
      String text;
      try {
        text = Files.readString(file);
      } catch (CharacterCodingException e) {
        throw new InputException(file.toString(), "", "cannot read: not UTF-8 text");
      } catch (IOException e) {
        throw new InputException(file.toString(), "", "cannot read: " + e.getMessage());
      }
      out.add(ManifestFile.parse(file.toString(), relative, text));
    }
    return out;
  }

  private static boolean hidden(Path p) {
    return p.getFileName().toString().startsWith(HIDDEN);
  }

  private static String relative(Path dir, Path file) {
    return dir.relativize(file).toString().replace(file.getFileSystem().getSeparator(), "/");
  }

  /** Ends the walk at a symbolic link. */
  private static final class LinkFound extends IOException {
    private static final long serialVersionUID = 1L;

    private final transient Path link;

    LinkFound(Path link) {
      super(link.toString());
      this.link = link;
    }
  }
}
