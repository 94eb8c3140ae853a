package dev.heapherd.reconcile;

import dev.heapherd.api.HeapPool;
import dev.heapherd.api.HeapPoolStatus;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Snapshot;
import dev.heapherd.rollout.PodTemplates;
import dev.heapherd.rollout.RolloutStep;
import dev.heapherd.rollout.WorkloadState;
import io.fabric8.kubernetes.api.model.HasMetadata;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.stream.Collectors;

/** One reconcile of one pool: the status being written, its conditions, events and history. */
final class PoolVisit {

  /** Actions kept in status.history: enough to see the last rollouts, small enough to read. */
  static final int HISTORY_LIMIT = 20;

  private final HeapPool pool;
  private final HeapPoolStatus status;
  private final Instant now;
  private final PoolEvents events;
  private final long generation;
  private final List<RolloutStep.Hold> holds = new ArrayList<>();

  PoolVisit(HeapPool pool, HeapPoolStatus status, Instant now, PoolEvents events) {
    this.pool = pool;
    this.status = status;
    this.now = now;
    this.events = events;
    Long g = pool.getMetadata().getGeneration();
    this.generation = g == null ? 0 : g;
  }

  HeapPool pool() {
    return pool;
  }

  HeapPoolStatus status() {
    return status;
  }

  Instant now() {
    return now;
  }

  String namespace() {
    return pool.getMetadata().getNamespace();
  }

  String poolName() {
    return pool.getMetadata().getName();
  }

  PoolEvents events() {
    return events;
  }

  /** The pool cannot be worked on: say why, leave every other condition Unknown. */
  void degraded(String reason, String message) {
    boolean changed = !isSet(Conditions.DEGRADED, Conditions.TRUE, reason, message);
    set(Conditions.DEGRADED, Conditions.TRUE, reason, message);
    set(Conditions.READY, Conditions.FALSE, reason, message);
    for (String type :
        List.of(
            Conditions.METRICS_AVAILABLE,
            Conditions.BUDGET_FEASIBLE,
            Conditions.PROPOSAL_READY,
            Conditions.ROLLOUT_IN_PROGRESS)) {
      set(type, Conditions.UNKNOWN, "NotEvaluated", "the pool is degraded: " + reason);
    }
    if (changed) {
      events.record(pool, pool, PoolEvents.WARNING, reason, message);
    }
  }

  /** Sets MetricsAvailable and returns why the pool's metrics cannot be trusted now, or empty. */
  String metricsCondition(PoolFile spec, Snapshot snapshot, int selected) {
    long ageSeconds = Duration.between(snapshot.capturedAt(), now).toSeconds();
    String held = "";
    if (ageSeconds > spec.rollout().metricsMaxAgeSeconds()) {
      held =
          "the newest metrics are "
              + ageSeconds
              + " s old, more than metricsMaxAgeSeconds "
              + spec.rollout().metricsMaxAgeSeconds();
      set(Conditions.METRICS_AVAILABLE, Conditions.FALSE, "MetricsStale", held);
    } else if (snapshot.workloads().isEmpty()) {
      held =
          "no workload could be measured: "
              + snapshot.held().stream()
                  .limit(3)
                  .map(h -> h.name() + " (" + h.reason() + ")")
                  .collect(Collectors.joining(", "));
      set(Conditions.METRICS_AVAILABLE, Conditions.FALSE, "NoMetrics", held);
    } else {
      set(
          Conditions.METRICS_AVAILABLE,
          Conditions.TRUE,
          "Measured",
          snapshot.workloads().size() + " of " + selected + " workloads measured");
    }
    return held;
  }

  /** Records an action taken on a workload: an event and a history line. */
  void act(
      HasMetadata workload, String reason, long fromHeapBytes, long toHeapBytes, String message) {
    String name = workload.getMetadata().getName();
    boolean warning = "RolloutRolledBack".equals(reason);
    events.record(
        pool, workload, warning ? PoolEvents.WARNING : PoolEvents.NORMAL, reason, message);
    HeapPoolStatus.Action a = new HeapPoolStatus.Action();
    a.time = now.toString();
    a.workload = name;
    a.action = reason;
    a.fromHeap = PodTemplates.mebibytes(fromHeapBytes);
    a.toHeap = PodTemplates.mebibytes(toHeapBytes);
    a.proposalHash = status.proposal == null ? null : status.proposal.hash;
    a.message = message;
    status.history.add(0, a);
    while (status.history.size() > HISTORY_LIMIT) {
      status.history.remove(status.history.size() - 1);
    }
  }

  /** Notes a rail that held a workload back; reported in conditions. */
  void held(RolloutStep.Hold hold) {
    holds.add(hold);
  }

  /**
   * Sets RolloutInProgress, Degraded and the summary Ready; returns whether anything is rolling.
   */
  boolean rolloutConditions(
      PoolFile spec, Map<String, WorkloadState> states, List<RolloutStep> steps) {
    set(
        Conditions.DEGRADED,
        Conditions.FALSE,
        "AsExpected",
        "the pool's spec and workloads are usable");
    List<String> rolling = new ArrayList<>();
    states.values().stream()
        .filter(s -> s.inFlight().isPresent())
        .forEach(s -> rolling.add(s.name()));
    steps.stream()
        .filter(s -> s instanceof RolloutStep.Start)
        .forEach(s -> rolling.add(s.workload()));
    steps.stream()
        .filter(s -> !(s instanceof RolloutStep.Start) && !(s instanceof RolloutStep.Hold))
        .forEach(s -> rolling.remove(s.workload()));
    String holdText =
        holds.stream()
            .map(h -> h.workload() + ": " + h.rail() + " (" + h.message() + ")")
            .collect(Collectors.joining("; "));
    boolean dryRun = !spec.applies();
    if (!rolling.isEmpty()) {
      set(
          Conditions.ROLLOUT_IN_PROGRESS,
          Conditions.TRUE,
          "Rolling",
          String.join(", ", rolling) + " rolling");
    } else if (dryRun) {
      set(
          Conditions.ROLLOUT_IN_PROGRESS,
          Conditions.FALSE,
          "DryRun",
          "DryRun mode changes nothing");
    } else if (!holds.isEmpty()) {
      set(Conditions.ROLLOUT_IN_PROGRESS, Conditions.FALSE, "Held", holdText);
    } else {
      set(Conditions.ROLLOUT_IN_PROGRESS, Conditions.FALSE, "Idle", "no change pending");
    }
    boolean metricsOk =
        Conditions.get(status.conditions, Conditions.METRICS_AVAILABLE)
            .map(c -> Conditions.TRUE.equals(c.getStatus()))
            .orElse(false);
    boolean proposalOk =
        Conditions.get(status.conditions, Conditions.PROPOSAL_READY)
            .map(c -> Conditions.TRUE.equals(c.getStatus()))
            .orElse(false);
    String previousReady =
        Conditions.get(status.conditions, Conditions.READY).map(c -> c.getMessage()).orElse("");
    if (!metricsOk) {
      set(
          Conditions.READY,
          Conditions.FALSE,
          "MetricsUnavailable",
          message(Conditions.METRICS_AVAILABLE));
    } else if (!proposalOk) {
      set(Conditions.READY, Conditions.FALSE, "NoProposal", message(Conditions.PROPOSAL_READY));
    } else if (dryRun) {
      set(
          Conditions.READY,
          Conditions.TRUE,
          "DryRun",
          "proposal " + status.proposal.hash + " published; nothing is changed in DryRun mode");
    } else if (!rolling.isEmpty()) {
      set(Conditions.READY, Conditions.TRUE, "Rolling", String.join(", ", rolling) + " rolling");
    } else if (holds.stream().anyMatch(h -> h.rail() == RolloutStep.Rail.NotApproved)) {
      set(
          Conditions.READY,
          Conditions.TRUE,
          "AwaitingApproval",
          "set spec.approvedProposal to " + status.proposal.hash + " to apply this proposal");
    } else if (!holds.isEmpty()) {
      set(Conditions.READY, Conditions.TRUE, "Held", holdText);
    } else {
      set(Conditions.READY, Conditions.TRUE, "InSync", "workloads run the proposed heaps");
    }
    String nowReady = message(Conditions.READY);
    if (!holds.isEmpty() && !nowReady.equals(previousReady)) {
      events.record(pool, pool, PoolEvents.NORMAL, "RolloutHeld", holdText);
    }
    return !rolling.isEmpty();
  }

  private String message(String type) {
    return Conditions.get(status.conditions, type).map(c -> c.getMessage()).orElse("");
  }

  private boolean isSet(String type, String value, String reason, String message) {
    return Conditions.get(status.conditions, type)
        .map(
            c ->
                value.equals(c.getStatus())
                    && reason.equals(c.getReason())
                    && message.equals(c.getMessage()))
        .orElse(false);
  }

  /** Sets condition {@code type} for this pool's generation. */
  void set(String type, String value, String reason, String message) {
    Conditions.set(status.conditions, type, value, reason, message, generation, now);
  }
}
