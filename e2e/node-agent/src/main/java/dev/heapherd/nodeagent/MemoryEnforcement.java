package dev.heapherd.nodeagent;

import java.io.IOException;
import java.nio.file.Path;
import java.util.Locale;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/** How containers' memory limits are enforced on this machine. */
interface MemoryEnforcement extends AutoCloseable {

  /** Where the cgroup file systems are mounted on Linux. */
  Path CGROUP_ROOT = Path.of("/sys/fs/cgroup");

  /** The choice of {@code --memory-enforcement}. */
  enum Mode {
    /** cgroup v2 when this machine allows it, else RSS polling. */
    AUTO,
    CGROUP_V2,
    RSS_POLLING;

    /** The flag's spelling: {@code auto}, {@code cgroup-v2}, {@code rss-polling}. */
    String flagValue() {
      return name().toLowerCase(Locale.ROOT).replace('_', '-');
    }

    static Mode fromFlag(String text) {
      for (Mode mode : values()) {
        if (mode.flagValue().equals(text)) {
          return mode;
        }
      }
      throw new IllegalArgumentException(
          "--memory-enforcement must be auto, cgroup-v2 or rss-polling, got '" + text + "'");
    }
  }

  /** {@code cgroup-v2} or {@code rss-polling}, as logged and annotated on the Node. */
  String name();

  /** Why this mechanism, in one line. */
  String detail();

  /** Holds {@code process} to {@code limitBytes}; {@code label} names it in logs and groups. */
  MemoryGuard guard(Process process, long limitBytes, String label) throws IOException;

  @Override
  void close();

  /** Picks the mechanism for {@code mode}; a forced cgroup-v2 that cannot work fails here. */
  static MemoryEnforcement choose(Mode mode, String nodeName) {
    Logger log = LoggerFactory.getLogger(MemoryEnforcement.class);
    if (mode == Mode.RSS_POLLING) {
      return new RssPolling("chosen by --memory-enforcement rss-polling");
    }
    try {
      return CgroupV2Limits.open(CGROUP_ROOT, nodeName);
    } catch (IOException e) {
      if (mode == Mode.CGROUP_V2) {
        throw new IllegalStateException("cgroup v2 memory limits unavailable: " + e.getMessage());
      }
      log.info("cgroup v2 memory limits unavailable ({}); polling RSS instead", e.getMessage());
      return new RssPolling("cgroup v2 unavailable: " + e.getMessage());
    }
  }
}
