package dev.heapherd.nodeagent;

import java.nio.file.Path;
import java.util.Optional;

/**
 * One row of the image table: containers whose image repository ends in {@code suffix} run {@code
 * file}, either a jar ({@code java -jar file}) or an image tarball ({@code .tar}, see {@link
 * ImageArchive}) whose entrypoint runs in the image's own root folder. The port the agent picks for
 * the container reaches the process through {@code portArgument} (appended after the container's
 * args, {@value #PORT_PLACEHOLDER} replaced), and without a readiness probe the container is ready
 * once {@code readyPath} answers 200.
 */
record ImageMapping(
    String suffix, Path file, Optional<String> portArgument, Optional<String> readyPath) {

  /** Stands for the container's port in a port argument. */
  static final String PORT_PLACEHOLDER = "{port}";

  /** Repository suffix of the synthetic workload's image. */
  static final String WORKLOAD_SUFFIX = "synthetic-workload";

  /** Repository suffix of the operator's image. */
  static final String OPERATOR_SUFFIX = "heapherd";

  ImageMapping {
    if (suffix.isBlank() || suffix.startsWith("/") || suffix.endsWith("/")) {
      throw new IllegalArgumentException(
          "image suffix must be a repository name or path such as 'synthetic-workload', got '"
              + suffix
              + "'");
    }
    if (portArgument.isPresent() && !portArgument.get().contains(PORT_PLACEHOLDER)) {
      throw new IllegalArgumentException(
          "port-arg for '"
              + suffix
              + "' must contain "
              + PORT_PLACEHOLDER
              + ", got '"
              + portArgument.get()
              + "'");
    }
    if (readyPath.isPresent() && !readyPath.get().startsWith("/")) {
      throw new IllegalArgumentException(
          "ready-path for '" + suffix + "' must start with /, got '" + readyPath.get() + "'");
    }
  }

  /** The synthetic workload (e2e/workload): port by {@code --port}, ready on {@code /ready}. */
  static ImageMapping workload(Path jar) {
    return new ImageMapping(
        WORKLOAD_SUFFIX, jar, Optional.of("--port=" + PORT_PLACEHOLDER), Optional.of("/ready"));
  }

  /** The operator's jar or image: serves /metrics and /readyz on {@code --http-address}. */
  static ImageMapping operator(Path file) {
    return new ImageMapping(
        OPERATOR_SUFFIX,
        file,
        Optional.of("--http-address=127.0.0.1:" + PORT_PLACEHOLDER),
        Optional.of("/readyz"));
  }

  /** Image tarballs are told from jars by their name, as {@code docker save -o} names them. */
  static final String ARCHIVE_EXTENSION = ".tar";

  /** Whether {@code file} is an image tarball rather than a jar. */
  boolean archive() {
    return file.getFileName().toString().endsWith(ARCHIVE_EXTENSION);
  }

  /**
   * Reads {@code SUFFIX=FILE[,port-arg=ARG][,ready-path=PATH]}, the form of {@code --image}; file
   * paths cannot hold commas.
   */
  static ImageMapping parse(String text) {
    String[] parts = text.split(",", -1);
    int equals = parts[0].indexOf('=');
    if (equals <= 0 || equals == parts[0].length() - 1) {
      throw new IllegalArgumentException(
          "--image must be SUFFIX=FILE[,port-arg=ARG][,ready-path=PATH], got '" + text + "'");
    }
    Optional<String> portArgument = Optional.empty();
    Optional<String> readyPath = Optional.empty();
    for (int i = 1; i < parts.length; i++) {
      String part = parts[i];
      if (part.startsWith("port-arg=")) {
        portArgument = Optional.of(part.substring("port-arg=".length()));
      } else if (part.startsWith("ready-path=")) {
        readyPath = Optional.of(part.substring("ready-path=".length()));
      } else {
        throw new IllegalArgumentException(
            "--image '" + text + "': unknown setting '" + part + "' (port-arg or ready-path)");
      }
    }
    return new ImageMapping(
        parts[0].substring(0, equals),
        Path.of(parts[0].substring(equals + 1)),
        portArgument,
        readyPath);
  }

  /** Whether {@code image}'s repository is {@code suffix} or ends in {@code /suffix}. */
  boolean matches(String image) {
    String repository = repository(image);
    return repository.equals(suffix) || repository.endsWith("/" + suffix);
  }

  /** The argument telling the process its port. */
  Optional<String> portArgument(int port) {
    return portArgument.map(a -> a.replace(PORT_PLACEHOLDER, Integer.toString(port)));
  }

  /** An image reference without its digest and tag: {@code registry:5000/team/app:1@sha256:…}. */
  static String repository(String image) {
    String name = image;
    int at = name.indexOf('@');
    if (at >= 0) {
      name = name.substring(0, at);
    }
    int colon = name.lastIndexOf(':');
    // A colon before the last slash belongs to a registry's port, not to a tag.
    if (colon > name.lastIndexOf('/')) {
      name = name.substring(0, colon);
    }
    return name;
  }
}
