package dev.heapherd.nodeagent;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.attribute.PosixFilePermissions;
import java.time.Duration;
import java.util.Base64;
import java.util.List;

/**
 * The root folder one container of an image runs in, as a container runtime prepares it: a copy of
 * the unpacked image, /proc and /dev mount points with the four character devices every runtime
 * provides, /etc/hosts naming the pod, emptyDir folders, and the service-account token files. Made
 * at the first start and kept across restarts, so emptyDir contents survive them as they do in
 * Kubernetes; the token is written again at every start.
 */
final class RootFilesystem {

  /**
   * The character devices (name, major, minor) of the OCI runtime specification's default devices
   * that a JVM may open: null, zero, random and urandom (Linux devices.txt numbers).
   */
  private static final List<Device> DEVICES =
      List.of(
          new Device("null", 1, 3),
          new Device("zero", 1, 5),
          new Device("random", 1, 8),
          new Device("urandom", 1, 9));

  /** A character device node: its name under /dev and its numbers. */
  private record Device(String name, int major, int minor) {}

  /** Marks a root folder that was copied completely. */
  private static final String READY_MARKER = ".node-agent-ready";

  /** How long copying an image may take; the operator's copies in about a second. */
  private static final Duration HELPER_TIMEOUT = Duration.ofMinutes(2);

  private RootFilesystem() {}

  /** Makes {@code rootfs} for {@code image}, or refreshes the token of one made before. */
  static void prepare(ContainerLaunch.Image image, Path rootfs) throws IOException {
    Path ready = rootfs.getParent().resolve(rootfs.getFileName() + READY_MARKER);
    if (!Files.exists(ready)) {
      ImageArchive.deleteTree(rootfs);
      // A full copy, not hard links: a process running as root in one container must not be able
      // to change the files of every other container of the image.
      Processes.run(
          List.of("cp", "-a", image.unpacked().rootfs().toString(), rootfs.toString()),
          HELPER_TIMEOUT);
      for (String dir : List.of("proc", "dev", "etc", "tmp")) {
        Files.createDirectories(rootfs.resolve(dir));
      }
      for (Device device : DEVICES) {
        Processes.run(
            List.of(
                "mknod",
                "-m",
                "666",
                rootfs.resolve("dev").resolve(device.name()).toString(),
                "c",
                Integer.toString(device.major()),
                Integer.toString(device.minor())),
            HELPER_TIMEOUT);
      }
      Files.writeString(
          rootfs.resolve("etc/hosts"),
          "127.0.0.1\tlocalhost\n127.0.0.1\t" + image.environment().get("HOSTNAME") + "\n",
          StandardCharsets.UTF_8);
      for (String mountPath : image.emptyDirs()) {
        Path dir = inside(rootfs, mountPath);
        Files.createDirectories(dir);
        // emptyDir's default mode (Kubernetes volumes documentation): writable by any user.
        Files.setPosixFilePermissions(dir, PosixFilePermissions.fromString("rwxrwxrwx"));
      }
      Files.writeString(ready, image.imageId() + "\n");
    }
    if (image.token().isPresent() && image.serviceAccountDir().isPresent()) {
      writeToken(image.token().get(), inside(rootfs, image.serviceAccountDir().get()));
    }
  }

  /**
   * The token, CA and namespace files of a service-account token volume, readable by the
   * container's user (the projected volume's default mode 0644, Kubernetes documentation).
   */
  private static void writeToken(ServiceAccountCredentials.Token token, Path dir)
      throws IOException {
    Files.createDirectories(dir);
    write(dir.resolve("token"), token.token());
    write(dir.resolve("namespace"), token.namespace());
    if (token.caBase64().isPresent()) {
      write(
          dir.resolve("ca.crt"),
          new String(Base64.getDecoder().decode(token.caBase64().get()), StandardCharsets.UTF_8));
    }
  }

  private static void write(Path file, String content) throws IOException {
    Files.writeString(file, content, StandardCharsets.UTF_8);
    Files.setPosixFilePermissions(file, PosixFilePermissions.fromString("rw-r--r--"));
  }

  /** {@code path} (absolute, without {@code ..}, checked when planned) below {@code rootfs}. */
  private static Path inside(Path rootfs, String path) {
    Path resolved = rootfs.resolve(path.substring(1)).normalize();
    if (!resolved.startsWith(rootfs) || !ImagePlan.absoluteWithoutParents(path)) {
      throw new IllegalArgumentException(path + " leaves the container's root folder");
    }
    return resolved;
  }
}
