package dev.heapherd.lab;

import java.io.File;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Optional;
import java.util.concurrent.TimeUnit;

/**
 * One lab service started by the runner as a child {@code java} process; its stdout and stderr go
 * to files so it can never block on a full pipe, and it is stopped by its own process handle.
 */
final class ChildService implements AutoCloseable {

  /** Seconds a service gets to run its shutdown hooks after SIGTERM before it is killed. */
  static final long STOP_TIMEOUT_SECONDS = 15;

  /** Lines of stderr shown when a service fails. */
  static final int ERROR_TAIL_LINES = 15;

  private final AppKind app;
  private final int port;
  private final String heap;
  private final long heapBytes;
  private final double opsPerSecond;
  private final Process process;
  private final Path stdout;
  private final Path stderr;

  private ChildService(
      AppKind app,
      int port,
      String heap,
      long heapBytes,
      double opsPerSecond,
      Process process,
      Path stdout,
      Path stderr) {
    this.app = app;
    this.port = port;
    this.heap = heap;
    this.heapBytes = heapBytes;
    this.opsPerSecond = opsPerSecond;
    this.process = process;
    this.stdout = stdout;
    this.stderr = stderr;
  }

  /**
   * Starts {@code java <jvmFlags> -Xms<heap> -Xmx<heap> -cp <this jar> LabMain serve ...} with the
   * java running the runner.
   */
  static ChildService start(
      AppKind app,
      int port,
      String heap,
      double opsPerSecond,
      List<String> jvmFlags,
      List<String> serveArgs,
      Path workDir)
      throws IOException {
    long heapBytes = Quantities.bytes(heap);
    List<String> command = new ArrayList<>();
    command.add(Path.of(System.getProperty("java.home"), "bin", "java").toString());
    command.addAll(jvmFlags);
    command.add("-Xms" + heapBytes);
    command.add("-Xmx" + heapBytes);
    command.add("-cp");
    // Absolute: the child runs in the work folder, where a relative class path finds nothing.
    command.add(absoluteClassPath());
    command.add(LabMain.class.getName());
    command.add("serve");
    command.add("--app=" + app.label());
    command.add("--port=" + port);
    command.add("--ops-per-second=" + opsPerSecond);
    command.add("--parent-pid=" + ProcessHandle.current().pid());
    command.addAll(serveArgs);
    Path out = workDir.resolve(app.label() + ".out");
    Path err = workDir.resolve(app.label() + ".err");
    Process process =
        new ProcessBuilder(command)
            .directory(workDir.toFile())
            .redirectOutput(out.toFile())
            .redirectError(err.toFile())
            .start();
    return new ChildService(app, port, heap, heapBytes, opsPerSecond, process, out, err);
  }

  AppKind app() {
    return app;
  }

  int port() {
    return port;
  }

  String heap() {
    return heap;
  }

  long heapBytes() {
    return heapBytes;
  }

  double opsPerSecond() {
    return opsPerSecond;
  }

  long pid() {
    return process.pid();
  }

  boolean alive() {
    return process.isAlive();
  }

  /** Whether the service printed its ready line. */
  boolean ready() throws IOException {
    return Files.readAllLines(stdout, StandardCharsets.UTF_8).contains(ServeCommand.READY);
  }

  /** The live-set figure from the service's loaded line, if printed yet. */
  Optional<Long> liveSetBytes() throws IOException {
    for (String line : Files.readAllLines(stdout, StandardCharsets.UTF_8)) {
      if (line.startsWith(ServeCommand.LOADED + " ")) {
        for (String field : line.split(" ")) {
          if (field.startsWith("liveBytes=")) {
            return Optional.of(Long.parseLong(field.substring("liveBytes=".length())));
          }
        }
      }
    }
    return Optional.empty();
  }

  /** The exit code and last lines of stderr, for a service that ended. */
  String failure() throws IOException {
    List<String> lines = Files.readAllLines(stderr, StandardCharsets.UTF_8);
    List<String> tail = lines.subList(Math.max(0, lines.size() - ERROR_TAIL_LINES), lines.size());
    return app.label()
        + " (pid "
        + pid()
        + ") exited with "
        + process.exitValue()
        + "; stderr "
        + stderr
        + ":\n  "
        + String.join("\n  ", tail);
  }

  /** Sends SIGTERM through the process handle without waiting, so many can stop at once. */
  void terminate() {
    process.destroy();
  }

  /** Stops the process by its handle: SIGTERM, then SIGKILL if it has not exited in time. */
  @Override
  public void close() throws InterruptedException {
    if (!process.isAlive()) {
      return;
    }
    process.destroy();
    if (!process.waitFor(STOP_TIMEOUT_SECONDS, TimeUnit.SECONDS)) {
      process.destroyForcibly().waitFor();
    }
  }

  private static String absoluteClassPath() {
    StringBuilder out = new StringBuilder();
    for (String entry : System.getProperty("java.class.path").split(File.pathSeparator)) {
      if (out.length() > 0) {
        out.append(File.pathSeparator);
      }
      out.append(Path.of(entry).toAbsolutePath());
    }
    return out.toString();
  }
}
