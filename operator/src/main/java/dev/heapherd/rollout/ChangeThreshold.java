package dev.heapherd.rollout;

import dev.heapherd.rollout.RolloutPlanner.Target;
import java.util.Locale;
import java.util.Optional;

/** The change-threshold rule: which proposed changes are too small to roll. */
public final class ChangeThreshold {

  private static final double PERCENT = 100.0;

  private ChangeThreshold() {}

  /**
   * How far {@code t} moves the workload's heap, in percent of the heap now; infinite when the
   * template sets no heap, so that a first -Xmx is never skipped as a small change.
   */
  public static double heapChangePercent(WorkloadState w, Target t) {
    return changePercent(w.heapBytes(), t.heapBytes());
  }

  /**
   * How far {@code t} moves the workload's chosen container limit, in percent of that limit now;
   * infinite when it has none.
   */
  public static double limitChangePercent(WorkloadState w, Target t) {
    return changePercent(w.podLimitBytes() - w.otherContainersBytes(), t.limitBytes());
  }

  /**
   * How far a size moves from {@code fromBytes} to {@code toBytes}, in percent of {@code
   * fromBytes}; infinite when there was no size, so the change is never small.
   */
  public static double changePercent(long fromBytes, long toBytes) {
    return fromBytes <= 0
        ? Double.POSITIVE_INFINITY
        : PERCENT * Math.abs(toBytes - fromBytes) / fromBytes;
  }

  /**
   * Why {@code t} is too small a change to roll, empty when it is not: both the heap and the limit
   * move by less than {@code thresholdPercent}. The limit counts on its own because the plan counts
   * on the memory a limit-only change frees or takes; skipping it could leave the budget with no
   * room for the rollouts that follow.
   */
  public static Optional<String> belowThreshold(WorkloadState w, Target t, long thresholdPercent) {
    double heap = heapChangePercent(w, t);
    double limit = limitChangePercent(w, t);
    if (Math.max(heap, limit) >= thresholdPercent) {
      return Optional.empty();
    }
    return Optional.of(
        heap >= limit
            ? String.format(
                Locale.ROOT,
                "a %.1f%% heap change is below the %d%% threshold",
                heap,
                thresholdPercent)
            : String.format(
                Locale.ROOT,
                "a %.1f%% limit change (heap %.1f%%) is below the %d%% threshold",
                limit,
                heap,
                thresholdPercent));
  }
}
