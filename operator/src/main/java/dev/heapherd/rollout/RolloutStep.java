package dev.heapherd.rollout;

/** One thing the rollout planner decided for one workload. */
public sealed interface RolloutStep {

  /** The workload the step is about. */
  String workload();

  /** Write the new heap and limit into the workload's pod template. */
  record Start(String workload, long heapBytes, long limitBytes, boolean grows)
      implements RolloutStep {}

  /** The controller finished rolling heapherd's change: forget the saved previous values. */
  record Finish(String workload) implements RolloutStep {}

  /** A pod on heapherd's template failed: write the saved previous values back. */
  record RollBack(String workload, String reason) implements RolloutStep {}

  /** Nothing starts for this workload now, because a rail said so. */
  record Hold(String workload, Rail rail, String message) implements RolloutStep {}

  /** The safety rails, as named in status, events and metrics. */
  enum Rail {
    /** Apply mode needs the current proposal's hash approved. */
    NotApproved,
    /** A freeze window is open. */
    Frozen,
    /** The workload's metrics are missing, stale or untrusted. */
    MetricsHeld,
    /** The workload carries the opt-out annotation. */
    OptedOut,
    /** heapherd rolled it back and its template has not changed since. */
    RolledBack,
    /** It changed too recently. */
    Cooldown,
    /** The change is below the threshold. */
    BelowThreshold,
    /** The pool already rolls as many workloads as allowed. */
    RollingLimit,
    /** Donors shrink before receivers grow. */
    ShrinkFirst,
    /** The rollout, surge pods counted, would exceed the budget. */
    Budget
  }
}
