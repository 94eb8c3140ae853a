package dev.heapherd.nodeagent;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.MissingNode;
import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.Iterator;
import java.util.List;
import java.util.Optional;
import java.util.stream.Stream;

/**
 * An image saved as a tarball in the docker-archive layout ({@code manifest.json} naming a config
 * and layer tarballs, as {@code jib:buildTar} and {@code docker save} write it), unpacked once into
 * a root folder. Layers may hold only regular files and folders: with no links, devices or
 * deletions, extracting a layer cannot write outside the root folder.
 */
final class ImageArchive {

  /** The image's settings from its config, as a container runtime reads them. */
  record Config(
      List<String> entrypoint,
      List<String> cmd,
      List<String> env,
      String user,
      String workingDir) {}

  /** An unpacked image: its ID (the config's digest), its root folder and its config. */
  record Unpacked(String imageId, Path rootfs, Config config) {}

  /** Marks a root folder whose layers were all extracted, so a restarted agent reuses it. */
  private static final String COMPLETE_MARKER = "complete";

  /** How long tar may take for one step; the operator's image unpacks in about a second. */
  private static final Duration TAR_TIMEOUT = Duration.ofMinutes(2);

  private static final ObjectMapper JSON = new ObjectMapper();

  private ImageArchive() {}

  /**
   * Unpacks {@code archive} below {@code imagesDir}/{@code <digest>}; an image unpacked before is
   * reused. IllegalArgumentException says what is wrong with the archive.
   */
  static Unpacked unpack(Path archive, Path imagesDir) throws IOException {
    if (!Files.isRegularFile(archive)) {
      throw new IllegalArgumentException("image tarball not found: " + archive);
    }
    Files.createDirectories(imagesDir);
    Path staging = Files.createTempDirectory(imagesDir, "staging-");
    try {
      tar(archive, "-xf", archive.toString(), "-C", staging.toString());
      JsonNode manifest = readJson(staging, "manifest.json", archive);
      if (!manifest.isArray() || manifest.size() != 1) {
        throw new IllegalArgumentException(
            archive + ": manifest.json must list exactly one image, it lists " + manifest.size());
      }
      JsonNode entry = manifest.get(0);
      String configName = text(field(entry, "Config"), archive, "the manifest's Config");
      byte[] configBytes = Files.readAllBytes(inside(staging, configName, archive));
      String digest = ImageTable.sha256Hex(new ByteArrayInputStream(configBytes));
      Path imageDir = imagesDir.resolve(digest);
      Unpacked image =
          new Unpacked(
              "sha256:" + digest,
              imageDir.resolve("rootfs"),
              config(JSON.readTree(configBytes), archive));
      if (Files.exists(imageDir.resolve(COMPLETE_MARKER))) {
        return image;
      }
      deleteTree(imageDir);
      Files.createDirectories(image.rootfs());
      for (JsonNode layer : field(entry, "Layers")) {
        Path layerFile = inside(staging, text(layer, archive, "a layer name"), archive);
        checkEntries(layerFile, archive);
        tar(
            archive,
            "--numeric-owner",
            "-xf",
            layerFile.toString(),
            "-C",
            image.rootfs().toString());
      }
      Files.writeString(imageDir.resolve(COMPLETE_MARKER), digest + "\n");
      return image;
    } finally {
      deleteTree(staging);
    }
  }

  /** Refuses a layer with anything but regular files and folders, or with whiteout files. */
  private static void checkEntries(Path layer, Path archive) throws IOException {
    for (String line : tar(archive, "-tvf", layer.toString())) {
      char type = line.isEmpty() ? '?' : line.charAt(0);
      if (type != '-' && type != 'd') {
        throw new IllegalArgumentException(
            archive
                + ": layer "
                + layer.getFileName()
                + " holds a link or special file ("
                + line.strip()
                + "); this node agent extracts only regular files and folders");
      }
    }
    for (String name : tar(archive, "-tf", layer.toString())) {
      if (Path.of(name).getFileName() != null
          && Path.of(name).getFileName().toString().startsWith(".wh.")) {
        throw new IllegalArgumentException(
            archive + ": layer " + layer.getFileName() + " deletes files (" + name + ")");
      }
    }
  }

  private static Config config(JsonNode root, Path archive) {
    JsonNode config = root.path("config");
    return new Config(
        strings(config.path("Entrypoint"), archive),
        strings(config.path("Cmd"), archive),
        strings(config.path("Env"), archive),
        config.path("User").asText(""),
        config.path("WorkingDir").asText(""));
  }

  private static List<String> strings(JsonNode array, Path archive) {
    List<String> values = new ArrayList<>();
    if (array.isMissingNode() || array.isNull()) {
      return values;
    }
    if (!array.isArray()) {
      throw new IllegalArgumentException(archive + ": config holds " + array + " for a list");
    }
    array.forEach(v -> values.add(v.asText()));
    return values;
  }

  /** The member {@code name} of the unpacked archive, refusing names that leave it. */
  private static Path inside(Path staging, String name, Path archive) {
    Path file = staging.resolve(name).normalize();
    if (!file.startsWith(staging) || !Files.isRegularFile(file)) {
      throw new IllegalArgumentException(archive + ": no file " + name + " in the tarball");
    }
    return file;
  }

  private static JsonNode readJson(Path staging, String name, Path archive) throws IOException {
    Path file = staging.resolve(name);
    if (!Files.isRegularFile(file)) {
      throw new IllegalArgumentException(
          archive
              + ": no "
              + name
              + "; save the image in the docker-archive layout (jib:buildTar, docker save)");
    }
    return JSON.readTree(file.toFile());
  }

  /** A manifest field; docker-archive writers differ in its case (Config or config). */
  private static JsonNode field(JsonNode entry, String name) {
    Iterator<String> names = entry.fieldNames();
    while (names.hasNext()) {
      String candidate = names.next();
      if (candidate.equalsIgnoreCase(name)) {
        return entry.get(candidate);
      }
    }
    return MissingNode.getInstance();
  }

  private static String text(JsonNode node, Path archive, String what) {
    if (!node.isTextual()) {
      throw new IllegalArgumentException(archive + ": manifest.json has no " + what);
    }
    return node.asText();
  }

  /** Runs tar; a failure names the archive and tar's message. */
  private static List<String> tar(Path archive, String... args) {
    List<String> command = new ArrayList<>(List.of("tar"));
    command.addAll(List.of(args));
    try {
      return Processes.run(command, TAR_TIMEOUT);
    } catch (IOException e) {
      throw new IllegalArgumentException(archive + ": " + e.getMessage());
    }
  }

  /** Removes {@code dir} and everything below it, if it exists. */
  static void deleteTree(Path dir) throws IOException {
    if (!Files.exists(dir)) {
      return;
    }
    try (Stream<Path> paths = Files.walk(dir)) {
      for (Path path : paths.sorted(Comparator.reverseOrder()).toList()) {
        Files.delete(path);
      }
    }
  }

  /** The user and group a process runs as. */
  record UserIds(long uid, long gid) {}

  /**
   * The user and group the image's {@code User} names (numeric, or a name from its /etc/passwd);
   * empty when it names none, which means root.
   */
  static Optional<UserIds> user(Unpacked image) throws IOException {
    String user = image.config().user();
    if (user.isEmpty()) {
      return Optional.empty();
    }
    String[] parts = user.split(":", 2);
    UserIds named =
        numeric(parts[0])
            ? new UserIds(Long.parseLong(parts[0]), Long.parseLong(parts[0]))
            : passwd(image.rootfs(), parts[0])
                .orElseThrow(
                    () ->
                        new IllegalArgumentException(
                            "image user " + parts[0] + " is not in the image's /etc/passwd"));
    if (parts.length == 1) {
      return Optional.of(named);
    }
    if (!numeric(parts[1])) {
      throw new IllegalArgumentException("image group " + parts[1] + " must be numeric here");
    }
    return Optional.of(new UserIds(named.uid(), Long.parseLong(parts[1])));
  }

  private static boolean numeric(String text) {
    return !text.isEmpty() && text.chars().allMatch(Character::isDigit);
  }

  private static Optional<UserIds> passwd(Path rootfs, String name) throws IOException {
    Path file = rootfs.resolve("etc/passwd");
    if (!Files.isRegularFile(file)) {
      return Optional.empty();
    }
    for (String line : Files.readAllLines(file)) {
      String[] fields = line.split(":");
      if (fields.length >= 4
          && fields[0].equals(name)
          && numeric(fields[2])
          && numeric(fields[3])) {
        return Optional.of(new UserIds(Long.parseLong(fields[2]), Long.parseLong(fields[3])));
      }
    }
    return Optional.empty();
  }
}
