package dev.heapherd.nodeagent;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;

/**
 * The Prometheus file_sd list of running containers, rewritten whole (temporary file, then rename)
 * so Prometheus never reads half a file.
 */
final class TargetsFile {

  private static final ObjectMapper JSON = new ObjectMapper();

  private final Optional<Path> file;
  private String written;

  /** A list kept at {@code file}, or nothing written when empty. */
  TargetsFile(Optional<Path> file) {
    this.file = file;
  }

  /** Writes {@code targets} when they differ from what the file holds. */
  void write(List<Target> targets) throws IOException {
    if (file.isEmpty()) {
      return;
    }
    String text = json(targets);
    if (text.equals(written)) {
      return;
    }
    Path path = file.get();
    Path parent = path.toAbsolutePath().getParent();
    Files.createDirectories(parent);
    Path temporary = parent.resolve(path.getFileName() + ".tmp");
    Files.writeString(temporary, text);
    Files.move(temporary, path, StandardCopyOption.ATOMIC_MOVE);
    written = text;
  }

  /** The file_sd form: one group per target, ordered by address so rewrites are stable. */
  static String json(List<Target> targets) {
    List<Map<String, Object>> groups = new ArrayList<>();
    targets.stream()
        .sorted(Comparator.comparing(Target::hostPort))
        .forEach(
            t -> {
              Map<String, Object> group = new LinkedHashMap<>();
              group.put("targets", List.of(t.hostPort()));
              group.put("labels", t.labels());
              groups.add(group);
            });
    try {
      return JSON.writerWithDefaultPrettyPrinter().writeValueAsString(groups) + "\n";
    } catch (JsonProcessingException e) {
      // Lists of strings and string maps always serialise.
      throw new IllegalStateException(e);
    }
  }
}
