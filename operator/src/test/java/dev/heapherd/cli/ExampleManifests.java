package dev.heapherd.cli;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import java.util.TreeMap;
import java.util.stream.Stream;

/** The bundled example's manifests copied for a test, and a folder's files for comparing. */
final class ExampleManifests {

  static final Path EXAMPLES = Path.of("..", "docs", "examples");

  private ExampleManifests() {}

  /** A copy of the bundled example's manifests in {@code dir}/manifests. */
  static Path copyInto(Path dir) throws IOException {
    Path from = EXAMPLES.resolve("manifests");
    Path to = dir.resolve("manifests");
    try (Stream<Path> files = Files.walk(from)) {
      for (Path f : files.toList()) {
        Path target = to.resolve(from.relativize(f).toString());
        if (Files.isDirectory(f)) {
          Files.createDirectories(target);
        } else {
          Files.copy(f, target);
        }
      }
    }
    return to;
  }

  /** Every file under {@code root}, hidden ones too, by '/' separated relative path. */
  static Map<String, String> contents(Path root) throws IOException {
    Map<String, String> out = new TreeMap<>();
    try (Stream<Path> files = Files.walk(root)) {
      for (Path f : files.filter(Files::isRegularFile).toList()) {
        // ISO-8859-1 maps every byte to one char, so equal strings mean equal bytes.
        out.put(
            root.relativize(f).toString().replace('\\', '/'),
            new String(Files.readAllBytes(f), StandardCharsets.ISO_8859_1));
      }
    }
    return out;
  }
}
