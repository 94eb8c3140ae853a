package dev.heapherd.rollout;

import dev.heapherd.input.Quantity;
import dev.heapherd.rollout.RolloutStep.Rail;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.OptionalLong;

/**
 * Decides, from observed workloads and an approved proposal, which workloads start, finish or roll
 * back a change now. Pure: it returns steps and changes nothing.
 */
public final class RolloutPlanner {

  private RolloutPlanner() {}

  /**
   * A proposed size for one workload.
   *
   * @param heapBytes the new -Xmx
   * @param limitBytes the new memory limit of the chosen container
   */
  public record Target(long heapBytes, long limitBytes) {}

  /**
   * What may start now, pool-wide.
   *
   * @param approved the proposal may be applied (approved hash, or automatic approval)
   * @param frozen a freeze window is open
   * @param metricsHeldReason why the pool's metrics cannot be trusted now, empty when they can
   * @param maxRollingWorkloads workloads rolling at once
   * @param cooldownSeconds a workload is left alone this long after a change
   * @param changeThresholdPercent smaller changes are skipped
   * @param budgetBytes the pool's budget, empty under the price objective
   * @param now the time of the decision
   */
  public record Gates(
      boolean approved,
      boolean frozen,
      String metricsHeldReason,
      long maxRollingWorkloads,
      long cooldownSeconds,
      long changeThresholdPercent,
      OptionalLong budgetBytes,
      Instant now) {}

  /** The steps for {@code workloads} towards {@code targets}, which name only proposed ones. */
  public static List<RolloutStep> decide(
      List<WorkloadState> workloads, Map<String, Target> targets, Gates gates) {
    List<RolloutStep> steps = new ArrayList<>();
    long rolling = 0;
    boolean shrinking = false;
    for (WorkloadState w : workloads) {
      if (w.inFlight().isEmpty()) {
        continue;
      }
      RolloutRecord r = w.inFlight().get();
      if (r.rollingBack()) {
        // Pods return to the previous values; a failure now is not heapherd's change failing.
        if (w.rolloutDone()) {
          steps.add(new RolloutStep.Finish(w.name()));
        } else {
          rolling++;
        }
      } else if (w.failure().isPresent()) {
        steps.add(new RolloutStep.RollBack(w.name(), w.failure().get()));
      } else if (w.rolloutDone()) {
        steps.add(new RolloutStep.Finish(w.name()));
      } else {
        rolling++;
        shrinking |= r.targetLimitBytes() < previousLimitBytes(w, r) - w.otherContainersBytes();
      }
    }
    if (!steps.isEmpty()) {
      // The next visit sees the pool after these settle; starting now would plan on stale sizes.
      return steps;
    }
    List<Candidate> candidates = new ArrayList<>();
    for (WorkloadState w : workloads) {
      Target t = targets.get(w.name());
      if (t == null || w.inFlight().isPresent() || inSync(w, t)) {
        continue;
      }
      RolloutStep.Hold hold = gate(w, t, gates);
      if (hold != null) {
        steps.add(hold);
      } else {
        candidates.add(new Candidate(w, t, t.limitBytes() + w.otherContainersBytes()));
      }
    }
    candidates.sort(
        Comparator.comparing(Candidate::grows)
            .thenComparingLong(c -> c.newPodLimitBytes() - c.state().podLimitBytes()));
    long committed = workloads.stream().mapToLong(RolloutPlanner::committedBytes).sum();
    boolean shrinkWaiting = shrinking || candidates.stream().anyMatch(c -> !c.grows());
    for (Candidate c : candidates) {
      WorkloadState w = c.state();
      if (c.grows() && shrinkWaiting) {
        steps.add(hold(w, Rail.ShrinkFirst, "waits until the workloads that shrink have rolled"));
        continue;
      }
      if (rolling >= gates.maxRollingWorkloads()) {
        steps.add(
            hold(
                w,
                Rail.RollingLimit,
                "waits: " + rolling + " of at most " + gates.maxRollingWorkloads() + " rolling"));
        continue;
      }
      long next = committed - committedBytes(w) + w.rollingBytes(c.newPodLimitBytes());
      if (gates.budgetBytes().isPresent() && next > gates.budgetBytes().getAsLong()) {
        steps.add(
            hold(
                w,
                Rail.Budget,
                "rolling it would let the pool's pods, surge pods counted, reach "
                    + Quantity.format(next)
                    + ", over the budget of "
                    + Quantity.format(gates.budgetBytes().getAsLong())
                    + "; lower the rolling update's surge or raise the budget"));
        continue;
      }
      committed = next;
      rolling++;
      steps.add(
          new RolloutStep.Start(
              w.name(), c.target().heapBytes(), c.target().limitBytes(), c.grows()));
    }
    return steps;
  }

  /**
   * Memory a workload may hold at any moment now: its steady pods, or, while a rollout runs (its
   * own, a rollback, or one someone else started), every pod and surge pod at the largest limit
   * involved.
   */
  public static long committedBytes(WorkloadState w) {
    if (w.inFlight().isEmpty()) {
      return w.rolloutDone() ? w.steadyBytes() : w.rollingBytes(w.podLimitBytes());
    }
    RolloutRecord r = w.inFlight().get();
    long peak =
        Math.max(
            Math.max(previousLimitBytes(w, r), r.targetLimitBytes() + w.otherContainersBytes()),
            w.podLimitBytes());
    return (long) (w.replicas() + w.surgePods()) * peak;
  }

  /** The pod limit before heapherd's change; unknown or unset counts as the current one. */
  private static long previousLimitBytes(WorkloadState w, RolloutRecord r) {
    if (r.previousLimit() == null) {
      return w.podLimitBytes();
    }
    return Quantity.parseBytes(r.previousLimit()) + w.otherContainersBytes();
  }

  private static boolean inSync(WorkloadState w, Target t) {
    return w.heapBytes() == t.heapBytes()
        && w.podLimitBytes() == t.limitBytes() + w.otherContainersBytes();
  }

  /** The first rail that stops this workload from starting, or null. */
  private static RolloutStep.Hold gate(WorkloadState w, Target t, Gates gates) {
    if (w.optedOut()) {
      return hold(w, Rail.OptedOut, "carries the opt-out annotation");
    }
    if (w.rolledBack()) {
      return hold(w, Rail.RolledBack, "was rolled back; held until its pod template changes");
    }
    if (!gates.metricsHeldReason().isEmpty()) {
      return hold(w, Rail.MetricsHeld, gates.metricsHeldReason());
    }
    if (!gates.approved()) {
      return hold(w, Rail.NotApproved, "the current proposal is not approved");
    }
    if (gates.frozen()) {
      return hold(w, Rail.Frozen, "a freeze window is open");
    }
    Optional<String> small = ChangeThreshold.belowThreshold(w, t, gates.changeThresholdPercent());
    if (small.isPresent()) {
      return hold(w, Rail.BelowThreshold, small.get());
    }
    if (w.lastChangedAt().isPresent()) {
      Instant free = w.lastChangedAt().get().plusSeconds(gates.cooldownSeconds());
      if (gates.now().isBefore(free)) {
        return hold(
            w,
            Rail.Cooldown,
            "changed recently; cooldown ends in "
                + Duration.between(gates.now(), free).toSeconds()
                + " s");
      }
    }
    return null;
  }

  private static RolloutStep.Hold hold(WorkloadState w, Rail rail, String message) {
    return new RolloutStep.Hold(w.name(), rail, message);
  }

  private record Candidate(WorkloadState state, Target target, long newPodLimitBytes) {
    boolean grows() {
      return newPodLimitBytes > state.podLimitBytes();
    }
  }
}
