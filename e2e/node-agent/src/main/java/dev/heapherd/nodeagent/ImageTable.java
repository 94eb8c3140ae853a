package dev.heapherd.nodeagent;

import java.io.IOException;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.HexFormat;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.stream.Collectors;

/**
 * Which jar or unpacked image runs which image, with the ID pods report: a jar's digest, or an
 * image's config digest as a container runtime reports it.
 */
final class ImageTable {

  /** Read size when hashing a jar; any size works, 64 KiB keeps the number of reads small. */
  private static final int READ_BYTES = 64 * 1024;

  private final Map<ImageMapping, String> imageIds;
  private final Map<ImageMapping, ImageArchive.Unpacked> unpacked;

  private ImageTable(
      Map<ImageMapping, String> imageIds, Map<ImageMapping, ImageArchive.Unpacked> unpacked) {
    this.imageIds = imageIds;
    this.unpacked = unpacked;
  }

  /**
   * Reads every mapped jar and unpacks every image tarball (below {@code imagesDir}) once: a
   * missing or bad file fails here, at start, not when a pod arrives.
   */
  static ImageTable of(List<ImageMapping> mappings, Path imagesDir) throws IOException {
    Map<ImageMapping, String> ids = new LinkedHashMap<>();
    Map<ImageMapping, ImageArchive.Unpacked> images = new LinkedHashMap<>();
    List<String> seen = new ArrayList<>();
    for (ImageMapping mapping : mappings) {
      if (seen.contains(mapping.suffix())) {
        throw new IllegalArgumentException("image suffix '" + mapping.suffix() + "' mapped twice");
      }
      seen.add(mapping.suffix());
      if (mapping.archive()) {
        requireRoot(mapping);
        ImageArchive.Unpacked image = ImageArchive.unpack(mapping.file(), imagesDir);
        images.put(mapping, image);
        ids.put(mapping, image.imageId());
      } else {
        ids.put(mapping, "sha256:" + sha256(mapping));
      }
    }
    return new ImageTable(ids, images);
  }

  /** The unpacked image of an image tarball's mapping; empty for a jar. */
  Optional<ImageArchive.Unpacked> unpacked(ImageMapping mapping) {
    return Optional.ofNullable(unpacked.get(mapping));
  }

  /** Only root may change a process's root folder and user. */
  private static void requireRoot(ImageMapping mapping) throws IOException {
    Object uid = Files.getAttribute(Path.of("/proc/self"), "unix:uid");
    if (!(uid instanceof Integer id) || id != ContainerLaunch.ROOT) {
      throw new IllegalArgumentException(
          "image tarball "
              + mapping.file()
              + " needs the agent to run as root: like a container runtime it changes the"
              + " process's root folder and user (running as uid "
              + uid
              + ")");
    }
  }

  /** The mapping for {@code image}; the longest matching suffix wins. */
  Optional<ImageMapping> lookup(String image) {
    return imageIds.keySet().stream()
        .filter(m -> m.matches(image))
        .max(Comparator.comparingInt(m -> m.suffix().length()));
  }

  /** The mapping's image ID, as {@code sha256:<hex>}. */
  String imageId(ImageMapping mapping) {
    return imageIds.get(mapping);
  }

  /** The mapped suffixes, for messages about images nothing runs. */
  String suffixes() {
    return imageIds.isEmpty()
        ? "none"
        : imageIds.keySet().stream().map(ImageMapping::suffix).collect(Collectors.joining(", "));
  }

  private static String sha256(ImageMapping mapping) {
    if (!Files.isRegularFile(mapping.file())) {
      throw new IllegalArgumentException(
          "jar for image '" + mapping.suffix() + "' not found: " + mapping.file());
    }
    try (InputStream in = Files.newInputStream(mapping.file())) {
      return sha256Hex(in);
    } catch (IOException e) {
      throw new IllegalArgumentException(
          "cannot read jar for image '" + mapping.suffix() + "': " + e.getMessage());
    }
  }

  /** The SHA-256 of everything {@code in} holds, in lower-case hex. */
  static String sha256Hex(InputStream in) throws IOException {
    MessageDigest digest;
    try {
      digest = MessageDigest.getInstance("SHA-256");
    } catch (NoSuchAlgorithmException e) {
      // Every Java platform must provide SHA-256 (MessageDigest's documentation).
      throw new IllegalStateException(e);
    }
    byte[] buffer = new byte[READ_BYTES];
    for (int n = in.read(buffer); n >= 0; n = in.read(buffer)) {
      digest.update(buffer, 0, n);
    }
    return HexFormat.of().formatHex(digest.digest());
  }
}
