package dev.heapherd.nodeagent;

import java.io.IOException;
import java.io.InputStream;
import java.nio.file.Files;
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

/** Which jar runs which image, with each jar's digest as the image ID pods report. */
final class ImageTable {

  /** Read size when hashing a jar; any size works, 64 KiB keeps the number of reads small. */
  private static final int READ_BYTES = 64 * 1024;

  private final Map<ImageMapping, String> imageIds;

  private ImageTable(Map<ImageMapping, String> imageIds) {
    this.imageIds = imageIds;
  }

  /**
   * Reads every mapped jar once: a missing or unreadable jar fails here, at start, not when a pod
   * arrives.
   */
  static ImageTable of(List<ImageMapping> mappings) {
    Map<ImageMapping, String> ids = new LinkedHashMap<>();
    List<String> seen = new ArrayList<>();
    for (ImageMapping mapping : mappings) {
      if (seen.contains(mapping.suffix())) {
        throw new IllegalArgumentException("image suffix '" + mapping.suffix() + "' mapped twice");
      }
      seen.add(mapping.suffix());
      ids.put(mapping, "sha256:" + sha256(mapping));
    }
    return new ImageTable(ids);
  }

  /** The mapping for {@code image}; the longest matching suffix wins. */
  Optional<ImageMapping> lookup(String image) {
    return imageIds.keySet().stream()
        .filter(m -> m.matches(image))
        .max(Comparator.comparingInt(m -> m.suffix().length()));
  }

  /** The digest of the mapping's jar, as {@code sha256:<hex>}. */
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
    if (!Files.isRegularFile(mapping.jar())) {
      throw new IllegalArgumentException(
          "jar for image '" + mapping.suffix() + "' not found: " + mapping.jar());
    }
    try (InputStream in = Files.newInputStream(mapping.jar())) {
      MessageDigest digest = MessageDigest.getInstance("SHA-256");
      byte[] buffer = new byte[READ_BYTES];
      for (int n = in.read(buffer); n >= 0; n = in.read(buffer)) {
        digest.update(buffer, 0, n);
      }
      return HexFormat.of().formatHex(digest.digest());
    } catch (IOException e) {
      throw new IllegalArgumentException(
          "cannot read jar for image '" + mapping.suffix() + "': " + e.getMessage());
    } catch (NoSuchAlgorithmException e) {
      // Every Java platform must provide SHA-256 (MessageDigest's documentation).
      throw new IllegalStateException(e);
    }
  }
}
