package dev.heapherd.nodeagent;

import io.fabric8.kubernetes.api.model.Container;
import io.fabric8.kubernetes.api.model.ContainerState;
import io.fabric8.kubernetes.api.model.ContainerStateBuilder;
import io.fabric8.kubernetes.api.model.ContainerStateTerminated;
import io.fabric8.kubernetes.api.model.ContainerStateTerminatedBuilder;
import io.fabric8.kubernetes.api.model.ContainerStatus;
import io.fabric8.kubernetes.api.model.ContainerStatusBuilder;
import java.io.File;
import java.io.IOException;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.time.temporal.ChronoUnit;
import java.util.List;
import java.util.Optional;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * One container of a pod bound to this node: its process, its restarts with back-off, and the
 * status it reports. Its state changes only on the agent's sync loop; the process, the memory guard
 * and the readiness checks report from other threads through their own fields.
 */
final class ContainerWorker {

  /** Exit code of a process killed by SIGKILL (128 + 9), what the kubelet reports for OOM kills. */
  static final int EXIT_KILLED = 137;

  /** Container runtime name in our container IDs: {@code pid://<pid>} names the process. */
  static final String CONTAINER_ID_PREFIX = "pid://";

  /** Kubernetes' terminated reasons and waiting reasons. */
  static final String OOM_KILLED = "OOMKilled";

  static final String ERROR = "Error";
  static final String COMPLETED = "Completed";
  static final String CRASH_LOOP = "CrashLoopBackOff";
  static final String CREATING = "ContainerCreating";
  static final String RUN_ERROR = "RunContainerError";

  private static final Logger LOG = LoggerFactory.getLogger(ContainerWorker.class);

  /** A started process and what watches it. */
  private record Run(
      Process process, Instant startedAt, MemoryGuard guard, Readiness readiness, Path log) {
    String containerId() {
      return CONTAINER_ID_PREFIX + process.pid();
    }
  }

  private final WorkerContext context;
  private final String podLabel;
  private final Path podDir;
  private final Container spec;
  private final ContainerLaunch launch;
  private final RestartPolicy restartPolicy;
  private final Optional<Integer> port;
  private final BackOff backOff;

  private Run run;
  private int restartCount;
  private boolean everStarted;
  private ContainerStateTerminated latest;
  private ContainerStateTerminated earlier;
  private Instant restartAt;
  private Duration currentDelay;
  private String startError;
  private boolean finished;

  ContainerWorker(
      WorkerContext context,
      String podLabel,
      Path podDir,
      Container spec,
      ContainerLaunch launch,
      RestartPolicy restartPolicy,
      Optional<Integer> port,
      Optional<ContainerStatus> previous) {
    this.context = context;
    this.podLabel = podLabel;
    this.podDir = podDir;
    this.spec = spec;
    this.launch = launch;
    this.restartPolicy = restartPolicy;
    this.port = port;
    this.backOff = new BackOff(context.maxBackOff());
    // A restarted agent finds pods it ran before with their processes gone: it counts them as
    // restarts, as the kubelet reports a container it lost (ContainerStatusUnknown).
    previous
        .filter(s -> s.getContainerID() != null)
        .ifPresent(
            s -> {
              restartCount = s.getRestartCount() == null ? 0 : s.getRestartCount();
              everStarted = true;
              latest =
                  new ContainerStateTerminatedBuilder()
                      .withExitCode(EXIT_KILLED)
                      .withReason("ContainerStatusUnknown")
                      .withMessage("the node agent restarted and no longer has this process")
                      .withContainerID(s.getContainerID())
                      .build();
            });
  }

  String name() {
    return spec.getName();
  }

  /** The container's port on 127.0.0.1, when its image is told one. */
  Optional<Integer> port() {
    return port;
  }

  /** Whether nothing runs and nothing will be started again. */
  boolean idle() {
    return run == null && (finished || !(launch instanceof ContainerLaunch.Startable));
  }

  /**
   * Records an exit, starts or restarts the process when due, and starts readiness checks; with
   * {@code stopping} the pod is going away and nothing starts.
   */
  void sync(Instant now, boolean stopping) {
    if (run != null && !run.process().isAlive()) {
      recordExit(now, stopping);
    }
    if (stopping) {
      finished = finished || run == null;
      return;
    }
    if (run == null
        && !finished
        && launch instanceof ContainerLaunch.Startable startable
        && (restartAt == null || !now.isBefore(restartAt))) {
      start(startable, now);
    }
    if (run != null) {
      run.readiness().checkIfDue(now, context.probes(), context.wake());
    }
  }

  /** The process running now, if any. */
  Optional<Process> process() {
    return Optional.ofNullable(run).map(Run::process);
  }

  /** The container's status as the pod reports it. */
  ContainerStatus status() {
    ContainerStatusBuilder status =
        new ContainerStatusBuilder()
            .withName(spec.getName())
            .withImage(spec.getImage())
            .withImageID(
                launch instanceof ContainerLaunch.Startable startable ? startable.imageId() : "")
            .withRestartCount(restartCount)
            .withStarted(run != null)
            .withReady(run != null && run.readiness().ready());
    if (run != null) {
      status
          .withContainerID(run.containerId())
          .withState(
              new ContainerStateBuilder()
                  .withNewRunning()
                  .withStartedAt(timestamp(run.startedAt()))
                  .endRunning()
                  .build());
    } else if (latest != null) {
      status.withContainerID(latest.getContainerID());
    }
    boolean ended = run == null && finished && latest != null;
    if (run == null) {
      status.withState(ended ? terminated(latest) : waiting());
    }
    ContainerStateTerminated last = ended ? earlier : latest;
    status.withLastState(last == null ? new ContainerState() : terminated(last));
    return status.build();
  }

  /** Why the running container can never be ready, when its probe cannot be run here. */
  Optional<String> unreadyReason() {
    return run == null ? Optional.empty() : run.readiness().unsupported();
  }

  private ContainerState waiting() {
    String reason;
    String message;
    if (launch instanceof ContainerLaunch.NotRunnable notRunnable) {
      reason = notRunnable.reason();
      message = notRunnable.message();
    } else if (startError != null) {
      reason = RUN_ERROR;
      message = startError;
    } else if (restartAt != null) {
      reason = CRASH_LOOP;
      message =
          "back-off "
              + currentDelay.toSeconds()
              + "s restarting failed container "
              + spec.getName()
              + " of pod "
              + podLabel;
    } else {
      reason = CREATING;
      message = null;
    }
    return new ContainerStateBuilder()
        .withNewWaiting()
        .withReason(reason)
        .withMessage(message)
        .endWaiting()
        .build();
  }

  private void start(ContainerLaunch.Startable startable, Instant now) {
    int count = everStarted ? restartCount + 1 : restartCount;
    Path log = podDir.resolve(spec.getName() + "." + count + ".log");
    List<String> command;
    if (startable instanceof ContainerLaunch.Image image) {
      Path rootfs = podDir.resolve(spec.getName() + ".rootfs");
      try {
        RootFilesystem.prepare(image, rootfs);
      } catch (IOException e) {
        failedToStart(now, "cannot prepare the root folder " + rootfs + ": " + e.getMessage());
        return;
      }
      command = image.command(rootfs, port);
    } else {
      command = ((ContainerLaunch.Jar) startable).command(context.java(), port);
    }
    ProcessBuilder builder =
        new ProcessBuilder(command)
            .directory(podDir.toFile())
            .redirectErrorStream(true)
            .redirectOutput(ProcessBuilder.Redirect.appendTo(log.toFile()))
            .redirectInput(ProcessBuilder.Redirect.from(new File("/dev/null")));
    builder.environment().clear();
    builder.environment().putAll(startable.environment());
    Process process;
    MemoryGuard guard;
    try {
      process = builder.start();
    } catch (IOException e) {
      failedToStart(now, "cannot start " + command.get(0) + ": " + e.getMessage());
      return;
    }
    context.started().add(process.toHandle());
    try {
      guard =
          startable.memoryLimitBytes().isPresent()
              ? context.memory().guard(process, startable.memoryLimitBytes().getAsLong(), label())
              : MemoryGuard.NONE;
    } catch (IOException e) {
      process.destroyForcibly();
      failedToStart(now, "cannot apply the memory limit: " + e.getMessage());
      return;
    }
    restartCount = count;
    everStarted = true;
    startError = null;
    restartAt = null;
    Readiness readiness =
        Readiness.of(spec, port, startable.image().readyPath(), context.http(), now);
    run = new Run(process, now, guard, readiness, log);
    process.onExit().thenRun(context.wake());
    LOG.info(
        "{} started pid {}{}{}: {} (log {})",
        label(),
        process.pid(),
        port.map(p -> " on port " + p).orElse(""),
        startable.memoryLimitBytes().isPresent()
            ? ", memory limit "
                + startable.memoryLimitBytes().getAsLong()
                + " bytes by "
                + context.memory().name()
            : "",
        String.join(" ", command),
        log);
  }

  private void failedToStart(Instant now, String message) {
    startError = message;
    currentDelay = backOff.after(Duration.ZERO);
    restartAt = now.plus(currentDelay);
    LOG.warn("{}: {}; retrying in {} s", label(), message, currentDelay.toSeconds());
  }

  private void recordExit(Instant now, boolean stopping) {
    Run ended = run;
    run = null;
    int exitCode = ended.process().exitValue();
    boolean overLimit = ended.guard().limitExceeded();
    ended.guard().release();
    String reason = overLimit ? OOM_KILLED : exitCode == 0 ? COMPLETED : ERROR;
    ContainerStateTerminated terminated =
        new ContainerStateTerminatedBuilder()
            .withExitCode(overLimit ? EXIT_KILLED : exitCode)
            .withReason(reason)
            .withStartedAt(timestamp(ended.startedAt()))
            .withFinishedAt(timestamp(now))
            .withContainerID(ended.containerId())
            .build();
    earlier = latest;
    latest = terminated;
    if (stopping || !restartPolicy.restarts(terminated.getExitCode())) {
      finished = true;
      LOG.info("{} pid {} exited: {} ({})", label(), ended.process().pid(), reason, exitCode);
      return;
    }
    currentDelay = backOff.after(Duration.between(ended.startedAt(), now));
    restartAt = now.plus(currentDelay);
    LOG.info(
        "{} pid {} exited: {} ({}); restarting in {} s (log {})",
        label(),
        ended.process().pid(),
        reason,
        exitCode,
        currentDelay.toSeconds(),
        ended.log());
  }

  private String label() {
    return podLabel + "/" + spec.getName();
  }

  private static ContainerState terminated(ContainerStateTerminated terminated) {
    return new ContainerStateBuilder().withTerminated(terminated).build();
  }

  /** RFC 3339 in whole seconds, as Kubernetes serialises its timestamps. */
  static String timestamp(Instant instant) {
    return instant.truncatedTo(ChronoUnit.SECONDS).toString();
  }
}
