package dev.heapherd.rollout;

import java.time.Instant;
import java.util.Optional;

/**
 * One workload of a pool as the rollout planner sees it: observed from the API server, no I/O.
 *
 * @param name Deployment or StatefulSet name
 * @param replicas desired pods
 * @param surgePods extra pods a rolling update may run beside the desired ones
 * @param podLimitBytes memory limit of one pod now: the chosen container plus the others
 * @param otherContainersBytes the part of {@code podLimitBytes} that heapherd never changes
 * @param heapBytes the -Xmx the template carries now, 0 when none
 * @param optedOut the workload carries the opt-out annotation
 * @param inFlight the change heapherd made and has not seen finish, if any
 * @param rolloutDone the workload's controller reports every pod on the current template, ready
 * @param failure why a pod on heapherd's template failed (OOMKilled, crash loop), if one did
 * @param rolledBack heapherd rolled this workload back and its template is unchanged since
 * @param lastChangedAt when heapherd last finished or rolled back a change here, if ever
 */
public record WorkloadState(
    String name,
    int replicas,
    int surgePods,
    long podLimitBytes,
    long otherContainersBytes,
    long heapBytes,
    boolean optedOut,
    Optional<RolloutRecord> inFlight,
    boolean rolloutDone,
    Optional<String> failure,
    boolean rolledBack,
    Optional<Instant> lastChangedAt) {

  /** Memory the workload's pods may hold now, with no rollout running. */
  public long steadyBytes() {
    return replicas * podLimitBytes;
  }

  /**
   * Memory its pods may hold at any moment while rolling from the current pod limit to {@code
   * newPodLimitBytes}: every pod, surge pods included, at the larger of the two.
   */
  public long rollingBytes(long newPodLimitBytes) {
    return (long) (replicas + surgePods) * Math.max(podLimitBytes, newPodLimitBytes);
  }
}
