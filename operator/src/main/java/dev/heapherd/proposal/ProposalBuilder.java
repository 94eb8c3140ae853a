package dev.heapherd.proposal;

import dev.heapherd.api.HeapPoolStatus;
import dev.heapherd.engine.PoolPlan;
import dev.heapherd.engine.WorkloadPlan;
import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Quantity;
import dev.heapherd.input.Snapshot;
import dev.heapherd.observe.ShortHash;
import dev.heapherd.plan.PlanDocument;
import dev.heapherd.plan.Planner;
import dev.heapherd.rollout.RolloutPlanner.Target;
import dev.heapherd.rollout.WorkloadState;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.TreeMap;
import java.util.stream.Collectors;

/** Turns a pool's measurements and observed workloads into a proposal with a content hash. */
public final class ProposalBuilder {

  private ProposalBuilder() {}

  /**
   * A proposal and the sizes it asks for.
   *
   * @param proposal as published in status
   * @param targets proposed sizes by workload name
   * @param plan the engine's answer it came from
   * @param input what the plan was made from: the measured workloads the pool selects, with the
   *     replicas their specs ask for, and every held one with its memory
   * @param sidecarBytes memory of the containers heapherd never resizes, taken from the budget
   * @param surgeReserveBytes room kept in the budget for the surge pods of rollouts
   */
  public record Result(
      HeapPoolStatus.Proposal proposal,
      Map<String, Target> targets,
      PoolPlan plan,
      Snapshot input,
      long sidecarBytes,
      long surgeReserveBytes) {

    /** The plan as {@code plan -o json} and the review page show it. */
    public PlanDocument document(PoolFile pool) {
      return PlanDocument.of(pool, input, plan, sidecarBytes, surgeReserveBytes);
    }
  }

  /**
   * Plans the pool. Workloads the snapshot holds, that opted out or were rolled back keep their
   * sizes and their memory is taken from the budget, as is that of containers heapherd never
   * resizes.
   *
   * @param states every workload the pool selects, by name
   * @param kinds Deployment or StatefulSet, by name
   * @throws InputException when the pool cannot be planned (e.g. nothing measured)
   */
  public static Result build(
      PoolFile pool,
      Map<String, WorkloadState> states,
      Map<String, String> kinds,
      Snapshot snapshot,
      Instant now)
      throws InputException {
    return build(pool, "spec", states, kinds, snapshot, "metrics", now, true);
  }

  /**
   * Plans a pool from its measurements alone, as {@code plan} does: with no manifests or cluster to
   * observe, each workload is as the snapshot measured it (its pods' memory its heap and non-heap
   * memory, a held one's what the snapshot says it holds), and nothing is reserved for surge pods.
   */
  public static Result fromMeasurements(
      PoolFile pool, String poolSource, Snapshot snapshot, String snapshotSource)
      throws InputException {
    Map<String, WorkloadState> states = new LinkedHashMap<>();
    Map<String, String> kinds = new LinkedHashMap<>();
    for (Snapshot.Workload w : snapshot.workloads()) {
      states.put(
          w.name(),
          measuredOnly(
              w.name(), w.replicas(), w.heapMaxBytes() + w.nonHeapBytes(), w.heapMaxBytes()));
      kinds.put(w.name(), w.kind());
    }
    for (Snapshot.Held h : snapshot.held()) {
      states.put(h.name(), measuredOnly(h.name(), 1, h.memoryBytes(), 0));
    }
    return build(
        pool, poolSource, states, kinds, snapshot, snapshotSource, snapshot.capturedAt(), false);
  }

  private static WorkloadState measuredOnly(
      String name, int replicas, long podBytes, long heapBytes) {
    return new WorkloadState(
        name,
        replicas,
        0,
        podBytes,
        0,
        heapBytes,
        false,
        Optional.empty(),
        true,
        Optional.empty(),
        false,
        Optional.empty());
  }

  /**
   * {@link #build(PoolFile, Map, Map, Snapshot, Instant)} for a pool and metrics read from files,
   * which errors then name.
   *
   * @param poolSource names the pool in errors
   * @param snapshotSource names the metrics in errors
   * @param reserveSurge leave room in the budget for the surge pods of the largest rollouts the
   *     operator runs at once; off when something else (a pipeline) paces the rollouts
   */
  public static Result build(
      PoolFile pool,
      String poolSource,
      Map<String, WorkloadState> states,
      Map<String, String> kinds,
      Snapshot snapshot,
      String snapshotSource,
      Instant now,
      boolean reserveSurge)
      throws InputException {
    Map<String, String> heldReasons = new TreeMap<>();
    snapshot.held().stream()
        .filter(h -> states.containsKey(h.name()))
        .forEach(h -> heldReasons.put(h.name(), h.reason()));
    states.values().stream()
        .filter(WorkloadState::optedOut)
        .forEach(w -> heldReasons.put(w.name(), "opted out by annotation"));
    states.values().stream()
        .filter(WorkloadState::rolledBack)
        .forEach(
            w -> heldReasons.put(w.name(), "rolled back; held until its pod template changes"));
    List<Snapshot.Workload> measured = new ArrayList<>();
    for (Snapshot.Workload m : snapshot.workloads()) {
      WorkloadState s = states.get(m.name());
      if (s != null && !heldReasons.containsKey(m.name())) {
        // The spec's replica count is what the budget must hold; scrapes can lag a scale change.
        measured.add(m.withReplicas(s.replicas()));
      }
    }
    states.keySet().stream()
        .filter(n -> !heldReasons.containsKey(n))
        .filter(n -> measured.stream().noneMatch(m -> m.name().equals(n)))
        .forEach(n -> heldReasons.put(n, "no metrics found for it"));
    List<Snapshot.Held> held =
        heldReasons.entrySet().stream()
            .map(
                e ->
                    new Snapshot.Held(
                        e.getKey(), e.getValue(), states.get(e.getKey()).steadyBytes()))
            .toList();
    long sidecarBytes =
        measured.stream()
            .mapToLong(m -> (long) m.replicas() * states.get(m.name()).otherContainersBytes())
            .sum();
    Snapshot input = new Snapshot(snapshot.capturedAt(), snapshot.windowSeconds(), measured, held);
    // Rolling updates run surge pods beside the old ones, so the steady state must leave room
    // for the largest rollouts that may run at once. Plan once with today's limits, then again
    // with the reserve the first answer's limits need.
    long rolling = reserveSurge ? pool.rollout().maxRollingWorkloads() : 0;
    long reserve = surgeReserve(states, Map.of(), rolling);
    PoolPlan plan = Planner.plan(pool, poolSource, input, snapshotSource, sidecarBytes + reserve);
    Map<String, Long> firstLimits = new LinkedHashMap<>();
    plan.workloads().forEach(w -> firstLimits.put(w.workload().name(), w.limitBytes()));
    long second = surgeReserve(states, firstLimits, rolling);
    if (second > reserve) {
      plan = Planner.plan(pool, poolSource, input, snapshotSource, sidecarBytes + second);
      reserve = second;
    }

    Map<String, Target> targets = new LinkedHashMap<>();
    for (WorkloadPlan w : plan.workloads()) {
      targets.put(w.workload().name(), new Target(w.heapBytes(), w.limitBytes()));
    }
    HeapPoolStatus.Proposal p =
        ProposalStatus.of(pool, plan, states, kinds, held, sidecarBytes, input.heldMemoryBytes());
    p.hash = hash(targets);
    p.computedAt = now.toString();
    return new Result(p, targets, plan, input, sidecarBytes, reserve);
  }

  /**
   * Memory the surge pods of the {@code rolling} largest rollouts need: per workload its surge pods
   * at the larger of today's pod limit and the planned one.
   */
  private static long surgeReserve(
      Map<String, WorkloadState> states, Map<String, Long> plannedLimits, long rolling) {
    return states.values().stream()
        .mapToLong(
            s -> {
              Long planned = plannedLimits.get(s.name());
              long podLimit =
                  planned == null
                      ? s.podLimitBytes()
                      : Math.max(s.podLimitBytes(), planned + s.otherContainersBytes());
              return (long) s.surgePods() * podLimit;
            })
        .boxed()
        .sorted(java.util.Comparator.reverseOrder())
        .limit(rolling)
        .mapToLong(Long::longValue)
        .sum();
  }

  /** The targets a published proposal asks for. */
  public static Map<String, Target> targets(HeapPoolStatus.Proposal p) {
    Map<String, Target> out = new LinkedHashMap<>();
    for (var w : p.workloads) {
      out.put(
          w.name,
          new Target(Quantity.parseBytes(w.proposedHeap), Quantity.parseBytes(w.proposedLimit)));
    }
    return out;
  }

  /** A hash of exactly what would be applied: each workload's heap and limit. */
  static String hash(Map<String, Target> targets) {
    String canonical =
        new TreeMap<>(targets)
            .entrySet().stream()
                .map(
                    e ->
                        e.getKey()
                            + "="
                            + e.getValue().heapBytes()
                            + "/"
                            + e.getValue().limitBytes())
                .collect(Collectors.joining("\n"));
    return ShortHash.of(canonical);
  }
}
