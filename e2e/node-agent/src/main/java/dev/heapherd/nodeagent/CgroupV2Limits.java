package dev.heapherd.nodeagent;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.nio.file.StandardOpenOption;
import java.util.List;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Enforces memory limits as a container runtime does: each container process goes into its own
 * child cgroup with {@code memory.max} set, and the kernel's OOM killer ends it there. The agent
 * makes one group of its own under the cgroup it runs in and the containers' groups under that.
 *
 * <p>The process is moved into its group just after it starts, so the few pages the JVM touches
 * before the move stay charged to the agent's group (cgroup v2 does not move charges).
 */
final class CgroupV2Limits implements MemoryEnforcement {

  /** The file system type of a cgroup v2 mount, as {@code stat -fc %T} and FileStore report it. */
  private static final String CGROUP2_TYPE = "cgroup2";

  private static final Logger LOG = LoggerFactory.getLogger(CgroupV2Limits.class);

  private final Path group;

  private CgroupV2Limits(Path group) {
    this.group = group;
  }

  /**
   * Makes the agent's group under the cgroup this process runs in and checks a child of it gets
   * {@code memory.max}; throws, with the reason, when any step fails.
   */
  static CgroupV2Limits open(Path root, String nodeName) throws IOException {
    String type = Files.getFileStore(root).type();
    if (!CGROUP2_TYPE.equals(type)) {
      throw new IOException(root + " is " + type + ", not " + CGROUP2_TYPE);
    }
    Path own = root.resolve(ownCgroup());
    enableMemory(own);
    Path group = own.resolve("heapherd-node-agent-" + nodeName);
    Files.createDirectories(group);
    enableMemory(group);
    Path trial = group.resolve("trial");
    Files.createDirectories(trial);
    try {
      if (!Files.isRegularFile(trial.resolve("memory.max"))) {
        throw new IOException("a child group of " + group + " has no memory.max");
      }
      write(trial.resolve("memory.max"), "max");
    } finally {
      Files.delete(trial);
    }
    return new CgroupV2Limits(group);
  }

  @Override
  public String name() {
    return "cgroup-v2";
  }

  @Override
  public String detail() {
    return "memory.max of one child group per container under " + group;
  }

  @Override
  public MemoryGuard guard(Process process, long limitBytes, String label) throws IOException {
    Path container = group.resolve(label.replace('/', '_') + "_" + process.pid());
    Files.createDirectories(container);
    write(container.resolve("memory.max"), Long.toString(limitBytes));
    // Without swap off the kernel would page the JVM out instead of enforcing the limit.
    writeIfPresent(container.resolve("memory.swap.max"), "0");
    write(container.resolve("cgroup.procs"), Long.toString(process.pid()));
    return new MemoryGuard() {
      @Override
      public boolean limitExceeded() {
        return oomKills(container) > 0;
      }

      @Override
      public void release() {
        try {
          Files.delete(container);
        } catch (IOException e) {
          LOG.warn("cannot remove cgroup {}: {}", container, e.getMessage());
        }
      }
    };
  }

  @Override
  public void close() {
    try {
      Files.deleteIfExists(group);
    } catch (IOException e) {
      LOG.warn("cannot remove cgroup {}: {}", group, e.getMessage());
    }
  }

  /** The {@code oom_kill} count of {@code memory.events}: the kernel killed in this group. */
  private static long oomKills(Path container) {
    try {
      for (String line : Files.readAllLines(container.resolve("memory.events"))) {
        if (line.startsWith("oom_kill ")) {
          return Long.parseLong(line.substring("oom_kill ".length()).trim());
        }
      }
    } catch (IOException e) {
      LOG.warn("cannot read {}/memory.events: {}", container, e.getMessage());
    }
    return 0;
  }

  /** This process's cgroup v2 path, relative to the root, from the {@code 0::} line. */
  private static String ownCgroup() throws IOException {
    List<String> lines = Files.readAllLines(Path.of("/proc/self/cgroup"));
    for (String line : lines) {
      if (line.startsWith("0::")) {
        return line.substring("0::".length()).replaceFirst("^/", "");
      }
    }
    throw new IOException("/proc/self/cgroup has no cgroup v2 entry");
  }

  private static void enableMemory(Path cgroup) throws IOException {
    String enabled = Files.readString(cgroup.resolve("cgroup.subtree_control"));
    if (List.of(enabled.trim().split("\\s+")).contains("memory")) {
      return;
    }
    try {
      write(cgroup.resolve("cgroup.subtree_control"), "+memory");
    } catch (IOException e) {
      // The kernel refuses (EBUSY) in a non-root group that holds processes, such as our own.
      throw new IOException(
          "cannot enable the memory controller for children of " + cgroup + ": " + e.getMessage());
    }
  }

  private static void write(Path file, String value) throws IOException {
    // Control files take one write each and cannot be truncated or created.
    Files.write(file, value.getBytes(StandardCharsets.US_ASCII), StandardOpenOption.WRITE);
  }

  private static void writeIfPresent(Path file, String value) throws IOException {
    try {
      write(file, value);
    } catch (NoSuchFileException e) {
      // Kernels built without swap accounting have no memory.swap.max; nothing to turn off.
    }
  }
}
