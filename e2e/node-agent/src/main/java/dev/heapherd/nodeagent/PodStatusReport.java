package dev.heapherd.nodeagent;

import io.fabric8.kubernetes.api.model.ContainerStatus;
import io.fabric8.kubernetes.api.model.HostIP;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.PodCondition;
import io.fabric8.kubernetes.api.model.PodConditionBuilder;
import io.fabric8.kubernetes.api.model.PodIP;
import io.fabric8.kubernetes.api.model.PodReadinessGate;
import io.fabric8.kubernetes.api.model.PodStatus;
import io.fabric8.kubernetes.api.model.PodStatusBuilder;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Optional;
import java.util.Set;
import java.util.stream.Collectors;

/** The status of a pod this node runs, worked out from its containers as the kubelet does. */
final class PodStatusReport {

  static final String PENDING = "Pending";
  static final String RUNNING = "Running";
  static final String SUCCEEDED = "Succeeded";
  static final String FAILED = "Failed";

  /** The condition types the node writes; others (DisruptionTarget, gates) are left as found. */
  static final Set<String> OWN_CONDITIONS =
      Set.of("PodScheduled", "Initialized", "ContainersReady", "Ready");

  private PodStatusReport() {}

  /**
   * The part of the status this node decides. {@code previous} holds the conditions last written,
   * whose transition times are kept while their status holds.
   */
  static PodStatus desired(
      Pod pod,
      List<ContainerStatus> containers,
      Optional<String> unreadyReason,
      Instant startTime,
      List<PodCondition> previous,
      Instant now) {
    String phase = phase(containers, RestartPolicy.of(pod.getSpec().getRestartPolicy()));
    List<String> unready =
        containers.stream()
            .filter(c -> !Boolean.TRUE.equals(c.getReady()))
            .map(ContainerStatus::getName)
            .toList();
    boolean terminal = SUCCEEDED.equals(phase) || FAILED.equals(phase);
    boolean containersReady = unready.isEmpty() && !terminal;
    String notReadyReason = terminal ? "PodCompleted" : "ContainersNotReady";
    String notReadyMessage =
        terminal ? null : unreadyReason.orElse("containers with unready status: " + unready);
    List<String> closedGates = closedGates(pod);
    boolean ready = containersReady && closedGates.isEmpty();
    List<PodCondition> conditions = new ArrayList<>();
    conditions.add(condition("PodScheduled", true, null, null, previous, now));
    conditions.add(condition("Initialized", true, null, null, previous, now));
    conditions.add(
        condition(
            "ContainersReady", containersReady, notReadyReason, notReadyMessage, previous, now));
    conditions.add(
        condition(
            "Ready",
            ready,
            containersReady ? "ReadinessGatesNotReady" : notReadyReason,
            containersReady
                ? "corresponding condition of pod readiness gate " + closedGates + " is not true"
                : notReadyMessage,
            previous,
            now));
    return new PodStatusBuilder()
        .withPhase(phase)
        .withHostIP(ContainerLaunch.LOOPBACK)
        .withHostIPs(new HostIP(ContainerLaunch.LOOPBACK))
        .withPodIP(ContainerLaunch.LOOPBACK)
        .withPodIPs(new PodIP(ContainerLaunch.LOOPBACK))
        .withStartTime(ContainerWorker.timestamp(startTime))
        .withConditions(conditions)
        .withContainerStatuses(containers)
        .build();
  }

  /**
   * The kubelet's phase rules (pkg/kubelet getPhase), for pods without init containers: Pending
   * while a container has never run, Running while one runs or will be restarted, else Succeeded
   * when every container exited 0 and Failed otherwise.
   */
  static String phase(List<ContainerStatus> containers, RestartPolicy policy) {
    int running = 0;
    int neverRan = 0;
    int stopped = 0;
    int succeeded = 0;
    for (ContainerStatus status : containers) {
      if (status.getState().getRunning() != null) {
        running++;
      } else if (status.getState().getTerminated() != null) {
        stopped++;
        if (status.getState().getTerminated().getExitCode() == 0) {
          succeeded++;
        }
      } else if (status.getLastState() != null && status.getLastState().getTerminated() != null) {
        stopped++;
      } else {
        neverRan++;
      }
    }
    if (neverRan > 0) {
      return PENDING;
    }
    if (running > 0) {
      return RUNNING;
    }
    if (stopped == 0) {
      return PENDING;
    }
    return switch (policy) {
      case ALWAYS -> RUNNING;
      case ON_FAILURE -> succeeded == stopped ? SUCCEEDED : RUNNING;
      case NEVER -> succeeded == stopped ? SUCCEEDED : FAILED;
    };
  }

  /** {@code current} with this node's part replaced by {@code desired}: what is written. */
  static PodStatus merged(PodStatus current, PodStatus desired) {
    PodStatus base = current == null ? new PodStatus() : current;
    List<PodCondition> conditions = new ArrayList<>(desired.getConditions());
    if (base.getConditions() != null) {
      base.getConditions().stream()
          .filter(c -> !OWN_CONDITIONS.contains(c.getType()))
          .forEach(conditions::add);
    }
    return new PodStatusBuilder(base)
        .withPhase(desired.getPhase())
        .withHostIP(desired.getHostIP())
        .withHostIPs(desired.getHostIPs())
        .withPodIP(desired.getPodIP())
        .withPodIPs(desired.getPodIPs())
        .withStartTime(desired.getStartTime())
        .withConditions(conditions)
        .withContainerStatuses(desired.getContainerStatuses())
        .build();
  }

  private static List<String> closedGates(Pod pod) {
    if (pod.getSpec().getReadinessGates() == null) {
      return List.of();
    }
    Set<String> open =
        pod.getStatus() == null || pod.getStatus().getConditions() == null
            ? Set.of()
            : pod.getStatus().getConditions().stream()
                .filter(c -> "True".equals(c.getStatus()))
                .map(PodCondition::getType)
                .collect(Collectors.toSet());
    return pod.getSpec().getReadinessGates().stream()
        .map(PodReadinessGate::getConditionType)
        .filter(type -> !open.contains(type))
        .toList();
  }

  private static PodCondition condition(
      String type,
      boolean status,
      String reason,
      String message,
      List<PodCondition> previous,
      Instant now) {
    String value = status ? "True" : "False";
    String since =
        previous.stream()
            .filter(c -> type.equals(c.getType()) && value.equals(c.getStatus()))
            .map(PodCondition::getLastTransitionTime)
            .findFirst()
            .orElse(ContainerWorker.timestamp(now));
    return new PodConditionBuilder()
        .withType(type)
        .withStatus(value)
        .withReason(status ? null : reason)
        .withMessage(status ? null : message)
        .withLastTransitionTime(since)
        .build();
  }
}
