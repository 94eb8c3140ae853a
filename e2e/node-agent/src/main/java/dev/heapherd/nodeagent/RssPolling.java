package dev.heapherd.nodeagent;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.Executors;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.TimeUnit;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Enforces memory limits by reading each process's resident set size from {@code /proc/PID/status}
 * and killing it (SIGKILL, by its pid) once it passes its limit. Unlike a cgroup this sees only the
 * process's own resident pages, not page cache or kernel memory charged to it, and a burst between
 * two polls can overshoot.
 */
final class RssPolling implements MemoryEnforcement {

  /** Poll period: the brief's 200 ms, short next to a JVM's seconds-long heap growth. */
  static final long POLL_MILLIS = 200;

  /** {@code /proc/PID/status} reports VmRSS in kB (proc(5)). */
  private static final long BYTES_PER_KB = 1024;

  private static final Logger LOG = LoggerFactory.getLogger(RssPolling.class);

  private final String detail;
  private final Set<Watched> watched = ConcurrentHashMap.newKeySet();
  private final ScheduledExecutorService poller =
      Executors.newSingleThreadScheduledExecutor(Threads.daemon("rss-polling"));

  RssPolling(String reason) {
    this.detail = reason + "; VmRSS polled every " + POLL_MILLIS + " ms";
    poller.scheduleWithFixedDelay(this::poll, POLL_MILLIS, POLL_MILLIS, TimeUnit.MILLISECONDS);
  }

  @Override
  public String name() {
    return "rss-polling";
  }

  @Override
  public String detail() {
    return detail;
  }

  @Override
  public MemoryGuard guard(Process process, long limitBytes, String label) {
    Watched entry = new Watched(process, limitBytes, label);
    watched.add(entry);
    return entry;
  }

  @Override
  public void close() {
    poller.shutdownNow();
  }

  private void poll() {
    for (Watched entry : watched) {
      try {
        entry.check();
      } catch (RuntimeException e) {
        // One unreadable process must not end the polling of the others.
        LOG.warn("cannot check memory of {}: {}", entry.label, e.toString());
      }
    }
  }

  /** VmRSS of {@code pid} in bytes, or -1 once the process is gone (zombies have none). */
  static long residentBytes(long pid) {
    try {
      for (String line : Files.readAllLines(Path.of("/proc", Long.toString(pid), "status"))) {
        if (line.startsWith("VmRSS:")) {
          String[] fields = line.substring("VmRSS:".length()).trim().split("\\s+");
          return Long.parseLong(fields[0]) * BYTES_PER_KB;
        }
      }
    } catch (IOException e) {
      // The process exited between the liveness check and the read.
    }
    return -1;
  }

  private final class Watched implements MemoryGuard {
    private final Process process;
    private final long limitBytes;
    private final String label;
    private volatile boolean exceeded;

    Watched(Process process, long limitBytes, String label) {
      this.process = process;
      this.limitBytes = limitBytes;
      this.label = label;
    }

    void check() {
      if (exceeded || !process.isAlive()) {
        return;
      }
      long rss = residentBytes(process.pid());
      if (rss > limitBytes) {
        exceeded = true;
        LOG.info(
            "{} pid {}: resident {} bytes passed its memory limit of {} bytes; killing it",
            label,
            process.pid(),
            rss,
            limitBytes);
        process.destroyForcibly();
      }
    }

    @Override
    public boolean limitExceeded() {
      return exceeded;
    }

    @Override
    public void release() {
      watched.remove(this);
    }
  }
}
