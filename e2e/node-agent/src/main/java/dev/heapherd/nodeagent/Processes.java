package dev.heapherd.nodeagent;

import java.time.Duration;
import java.util.concurrent.TimeUnit;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/** Stopping processes the agent started, by their own handles (so by pid, never by name). */
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
}
