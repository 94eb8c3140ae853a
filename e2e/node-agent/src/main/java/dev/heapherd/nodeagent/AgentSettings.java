package dev.heapherd.nodeagent;

import com.sun.management.OperatingSystemMXBean;
import io.fabric8.kubernetes.api.model.Quantity;
import java.lang.management.ManagementFactory;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.Optional;

/** Everything the agent is told at start; {@link Main} builds it from flags, tests directly. */
record AgentSettings(
    Path kubeconfig,
    String nodeName,
    Path stateDir,
    Optional<Path> fileSd,
    List<ImageMapping> images,
    Path java,
    Quantity cpu,
    Quantity memory,
    int maxPods,
    Duration maxBackOff,
    Duration maxGrace,
    MemoryEnforcement.Mode memoryEnforcement) {

  /** The java binary the agent itself runs on. */
  static Path currentJava() {
    return Path.of(System.getProperty("java.home"), "bin", "java");
  }

  /** This machine's processors, as a CPU quantity. */
  static Quantity machineCpu() {
    return new Quantity(Integer.toString(Runtime.getRuntime().availableProcessors()));
  }

  /** This machine's memory (as the JVM sees it, so a container's limit when in one). */
  static Quantity machineMemory() {
    long bytes =
        ((OperatingSystemMXBean) ManagementFactory.getOperatingSystemMXBean()).getTotalMemorySize();
    return new Quantity(Long.toString(bytes));
  }
}
