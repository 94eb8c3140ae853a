package dev.heapherd.nodeagent;

import java.io.IOException;
import java.io.InputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Running the agent's helper tools, and stopping processes the agent started by their own handles
 * (so by pid, never by name).
 */
final class Processes {

  private static final Logger LOG = LoggerFactory.getLogger(Processes.class);

  private Processes() {}

  /** SIGTERM, then SIGKILL after {@code grace}; returns once the process has exited. */
  static void stop(Process process, Duration grace, String label) {
    process.destroy();
    try {
      if (!process.waitFor(grace.toMillis(), TimeUnit.MILLISECONDS)) {
        LOG.info(
            "{} pid {} still running {} s after SIGTERM; sending SIGKILL",
            label,
            process.pid(),
            grace.toSeconds());
        process.destroyForcibly();
        process.waitFor();
      }
    } catch (InterruptedException e) {
      process.destroyForcibly();
      Thread.currentThread().interrupt();
    }
  }

  /**
   * Runs a helper tool (tar, cp, mknod) to its end and returns the lines it printed on stdout;
   * IOException when it fails or outlives {@code timeout}, with what it printed on stderr. Warnings
   * on stderr of a tool that succeeds are dropped (GNU tar warns about the extended headers Jib's
   * layers carry).
   */
  static List<String> run(List<String> command, Duration timeout) throws IOException {
    Path errors = Files.createTempFile("node-agent-tool", ".err");
    try {
      Process process =
          new ProcessBuilder(command)
              .redirectError(ProcessBuilder.Redirect.to(errors.toFile()))
              .start();
      String output;
      try (InputStream in = process.getInputStream()) {
        output = new String(in.readAllBytes(), StandardCharsets.UTF_8);
      }
      try {
        if (!process.waitFor(timeout.toMillis(), TimeUnit.MILLISECONDS)) {
          process.destroyForcibly();
          throw new IOException(
              String.join(" ", command) + " took over " + timeout.toSeconds() + " s");
        }
      } catch (InterruptedException e) {
        process.destroyForcibly();
        Thread.currentThread().interrupt();
        throw new IOException("interrupted: " + String.join(" ", command), e);
      }
      if (process.exitValue() != 0) {
        throw new IOException(
            String.join(" ", command) + " failed: " + Files.readString(errors).strip());
      }
      return output.lines().toList();
    } finally {
      Files.deleteIfExists(errors);
    }
  }
}
