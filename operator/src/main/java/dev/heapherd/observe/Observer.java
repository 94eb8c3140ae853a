package dev.heapherd.observe;

import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Quantity;
import dev.heapherd.rollout.Annotations;
import dev.heapherd.rollout.PodTemplates;
import dev.heapherd.rollout.RolloutRecord;
import dev.heapherd.rollout.WorkloadState;
import io.fabric8.kubernetes.api.model.ContainerStatus;
import io.fabric8.kubernetes.api.model.EnvVar;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.PodTemplateSpec;
import java.time.Instant;
import java.time.OffsetDateTime;
import java.time.format.DateTimeParseException;
import java.util.List;
import java.util.Objects;
import java.util.Optional;

/** Turns a workload and its pods, as the API server shows them, into the planner's view. */
public final class Observer {

  /**
   * Restarts of a pod on heapherd's template that count as a crash loop even before the kubelet
   * reports CrashLoopBackOff. Our choice: one restart can be chance, three is a pattern.
   */
  static final int CRASH_RESTARTS = 3;

  /** The kubelet's reason for a container killed by the kernel's OOM killer. */
  static final String OOM_KILLED = "OOMKilled";

  /** The kubelet's waiting reason for a container that keeps failing. */
  static final String CRASH_LOOP = "CrashLoopBackOff";

  /**
   * How long every pod of a changed workload must have been Ready before its rollout counts as
   * finished. The Deployment controller calls a pod available the moment it is Ready; a JVM given
   * too little memory can pass its first probe and be OOMKilled a second later, and once the
   * rollout is finished its failures are no longer heapherd's to roll back. Our choice: a JVM that
   * cannot live with its new sizes usually fails within seconds of start-up; this leaves room for
   * start-up load and the first collections of a slow machine.
   */
  public static final long SETTLE_SECONDS = 30;

  private Observer() {}

  /** The planner's view of {@code w} at {@code now}; {@code pods} are the pods of its namespace. */
  public static WorkloadState observe(
      PoolWorkload w, List<Pod> pods, PoolFile.Rollout rollout, Instant now) {
    PodTemplates.MemorySettings m =
        PodTemplates.read(w.template(), rollout.containerName(), rollout.jvmOptionsVariable())
            .orElseThrow(() -> new IllegalArgumentException("no container in " + w.name()));
    m.problem()
        .ifPresent(
            p -> {
              throw new IllegalArgumentException(p);
            });
    long containerLimit = m.limitBytes().orElse(0);
    Optional<RolloutRecord> inFlight =
        RolloutRecord.fromJson(w.annotations().get(Annotations.ROLLOUT));
    Optional<String> failure =
        inFlight.isPresent() && !inFlight.get().rollingBack()
            ? failure(w, pods, m, rollout.jvmOptionsVariable())
            : Optional.empty();
    return new WorkloadState(
        w.name(),
        w.replicas(),
        w.surgePods(),
        containerLimit + m.otherContainersLimitBytes(),
        m.otherContainersLimitBytes(),
        m.heapBytes().orElse(0),
        "true".equalsIgnoreCase(w.annotations().get(Annotations.OPT_OUT)),
        inFlight,
        w.rolloutDone() && !terminating(w, pods) && settled(w, pods, now),
        failure,
        fingerprint(w.template()).equals(w.annotations().get(Annotations.ROLLED_BACK)),
        instant(w.annotations().get(Annotations.CHANGED_AT)));
  }

  /**
   * A short hash of what a pod template runs: each container's name, image, command, arguments,
   * environment and memory sizes in bytes. Fields the API server fills in by default and the
   * spelling of quantities (it rewrites 1024Mi as 1Gi) do not change it.
   */
  public static String fingerprint(PodTemplateSpec template) {
    StringBuilder text = new StringBuilder();
    for (var c : template.getSpec().getContainers()) {
      text.append(c.getName())
          .append('|')
          .append(c.getImage())
          .append('|')
          .append(c.getCommand())
          .append('|')
          .append(c.getArgs())
          .append('|');
      if (c.getEnv() != null) {
        c.getEnv()
            .forEach(e -> text.append(e.getName()).append('=').append(e.getValue()).append(';'));
      }
      // No resources and empty ones read alike: the API server returns "resources: {}" for both.
      var resources = c.getResources();
      text.append('|').append(resources == null ? "" : bytes(resources.getLimits())).append('|');
      text.append(resources == null ? "" : bytes(resources.getRequests()));
      text.append('\n');
    }
    return ShortHash.of(text.toString());
  }

  private static String bytes(java.util.Map<String, io.fabric8.kubernetes.api.model.Quantity> map) {
    if (map == null || !map.containsKey("memory")) {
      return "";
    }
    return String.valueOf(Quantity.parseBytes(map.get("memory").toString()));
  }

  /**
   * A pod of {@code w} is still shutting down. The workload's controller no longer counts it once
   * its replacement is ready, but it holds its memory until it exits: the rollout is not done until
   * it is gone, or the next workload's surge pod could take the pool over its budget.
   */
  private static boolean terminating(PoolWorkload w, List<Pod> pods) {
    return pods.stream()
        .anyMatch(
            p ->
                p.getMetadata().getDeletionTimestamp() != null
                    && w.selects(p.getMetadata().getLabels()));
  }

  /**
   * At least as many of {@code w}'s pods as it wants have been Ready for {@link #SETTLE_SECONDS}. A
   * container that restarts turns its pod unready, so the clock starts again.
   */
  private static boolean settled(PoolWorkload w, List<Pod> pods, Instant now) {
    Instant readyBefore = now.minusSeconds(SETTLE_SECONDS);
    long settled =
        pods.stream()
            .filter(p -> w.selects(p.getMetadata().getLabels()))
            .filter(p -> p.getMetadata().getDeletionTimestamp() == null)
            .filter(p -> readySince(p).map(t -> !t.isAfter(readyBefore)).orElse(false))
            .count();
    return settled >= w.replicas();
  }

  private static Optional<Instant> readySince(Pod pod) {
    if (pod.getStatus() == null || pod.getStatus().getConditions() == null) {
      return Optional.empty();
    }
    return pod.getStatus().getConditions().stream()
        .filter(c -> "Ready".equals(c.getType()) && "True".equals(c.getStatus()))
        .findFirst()
        .flatMap(c -> instant(c.getLastTransitionTime()));
  }

  /** Why a pod running heapherd's template failed, if one did. */
  private static Optional<String> failure(
      PoolWorkload w, List<Pod> pods, PodTemplates.MemorySettings m, String variable) {
    for (Pod pod : pods) {
      if (!isNewPodOf(pod, w, m, variable) || pod.getStatus() == null) {
        continue;
      }
      List<ContainerStatus> statuses = pod.getStatus().getContainerStatuses();
      for (ContainerStatus s : statuses == null ? List.<ContainerStatus>of() : statuses) {
        if (!m.containerName().equals(s.getName())) {
          continue;
        }
        String podName = pod.getMetadata().getName();
        if (terminatedBy(s, OOM_KILLED)) {
          return Optional.of("pod " + podName + " was OOMKilled");
        }
        if (s.getState() != null
            && s.getState().getWaiting() != null
            && CRASH_LOOP.equals(s.getState().getWaiting().getReason())) {
          return Optional.of("pod " + podName + " is crash-looping");
        }
        if (s.getRestartCount() != null && s.getRestartCount() >= CRASH_RESTARTS) {
          return Optional.of("pod " + podName + " restarted " + s.getRestartCount() + " times");
        }
      }
    }
    return Optional.empty();
  }

  private static boolean terminatedBy(ContainerStatus s, String reason) {
    boolean now =
        s.getState() != null
            && s.getState().getTerminated() != null
            && reason.equals(s.getState().getTerminated().getReason());
    boolean before =
        s.getLastState() != null
            && s.getLastState().getTerminated() != null
            && reason.equals(s.getLastState().getTerminated().getReason());
    return now || before;
  }

  /** The pod belongs to the workload and runs the JVM options heapherd wrote. */
  private static boolean isNewPodOf(
      Pod pod, PoolWorkload w, PodTemplates.MemorySettings m, String variable) {
    if (!w.selects(pod.getMetadata().getLabels())) {
      return false;
    }
    return pod.getSpec().getContainers().stream()
        .filter(c -> m.containerName().equals(c.getName()))
        .flatMap(c -> c.getEnv() == null ? java.util.stream.Stream.empty() : c.getEnv().stream())
        .filter(e -> variable.equals(e.getName()))
        .map(EnvVar::getValue)
        .anyMatch(v -> Objects.equals(v, m.jvmOptions()));
  }

  private static Optional<Instant> instant(String text) {
    if (text == null) {
      return Optional.empty();
    }
    try {
      return Optional.of(OffsetDateTime.parse(text).toInstant());
    } catch (DateTimeParseException e) {
      return Optional.empty();
    }
  }
}
