package dev.heapherd.plan;

import dev.heapherd.engine.CurveFit;
import dev.heapherd.engine.GcForecast;
import dev.heapherd.engine.Objective;
import dev.heapherd.engine.PoolPlan;
import dev.heapherd.engine.WorkloadPlan;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Snapshot;
import dev.heapherd.rollout.JvmOptions;
import java.util.ArrayList;
import java.util.List;
import java.util.OptionalLong;

/**
 * The machine-readable plan printed by {@code plan -o json}. Field names are part of the command
 * line's contract: add fields, never rename them.
 */
public record PlanDocument(
    String pool,
    String namespace,
    String objective,
    String capturedAt,
    long windowSeconds,
    long budgetBytes,
    boolean feasible,
    long minimumBudgetBytes,
    long usedBytes,
    long heldMemoryBytes,
    double level,
    Forecast predictedGcSecondsPerHour,
    List<WorkloadEntry> workloads,
    List<Snapshot.Held> held,
    String caution,
    long sidecarMemoryBytes,
    long surgeReserveBytes) {

  /** The caution every plan carries: changing production memory can cause outages. */
  public static final String CAUTION =
      "This is a proposal computed from one metrics snapshot. Review it, try it in staging first,"
          + " and follow your organisation's change process before applying it to production.";

  /** Predicted GC seconds per hour under each allocation. */
  public record Forecast(double current, double proposed, double linearRule, double equalSplit) {
    static Forecast of(GcForecast f) {
      return new Forecast(f.current(), f.proposed(), f.linearRule(), f.equalSplit());
    }
  }

  /** Heaps per pod under the two comparison rules. */
  public record Comparison(long linearRuleHeapBytes, long equalSplitHeapBytes) {}

  /**
   * The young part of a workload's curve: {@code constant / (share * heap)} GC seconds per second.
   *
   * @param constant young GC time rate times young capacity at the heap measured under
   * @param share young capacity per byte of heap
   */
  public record YoungPart(double constant, Share share) {}

  /**
   * A generation's share of the heap and where it came from.
   *
   * @param value fraction of the heap limit
   * @param source {@code measured} (from the JVM's memory pools) or {@code assumed} (the
   *     collector's documented default)
   */
  public record Share(double value, String source) {
    static Share of(double value, boolean measured) {
      return new Share(value, measured ? "measured" : "assumed");
    }
  }

  /** One workload's line of the plan. */
  public record WorkloadEntry(
      String name,
      int replicas,
      long liveBytes,
      long nonHeapBytes,
      long currentHeapBytes,
      long heapBytes,
      long limitBytes,
      String maxHeapOption,
      double gcConstant,
      String gcConstantEstimator,
      long offsetBytes,
      double heapIndependentGcSecondsPerSecond,
      YoungPart young,
      Share oldShare,
      int curveHeaps,
      double weight,
      String bound,
      long lowHeapBytes,
      long highHeapBytes,
      Comparison comparison,
      Forecast predictedGcSecondsPerHour,
      long sampleCount,
      String confidence,
      List<String> notes) {}

  /** Builds the document from a plan and its inputs, with nothing reserved beside the heaps. */
  public static PlanDocument of(PoolFile pool, Snapshot snapshot, PoolPlan plan) {
    return of(pool, snapshot, plan, 0, 0);
  }

  /**
   * Builds the document from a plan and its inputs.
   *
   * @param sidecarBytes memory of containers never resized, taken from the budget before planning
   * @param surgeReserveBytes room kept in the budget for rollouts' surge pods
   */
  public static PlanDocument of(
      PoolFile pool, Snapshot snapshot, PoolPlan plan, long sidecarBytes, long surgeReserveBytes) {
    // Held workloads keep their containers, and under a budget sidecars and the surge room were
    // taken from it before planning: the pool's figures include them.
    long reserved =
        plan.objective() instanceof Objective.Budget ? sidecarBytes + surgeReserveBytes : 0;
    long held = snapshot.heldMemoryBytes();
    List<WorkloadEntry> entries = new ArrayList<>();
    for (int i = 0; i < plan.workloads().size(); i++) {
      entries.add(entry(plan.workloads().get(i), snapshot.workloads().get(i)));
    }
    return new PlanDocument(
        pool.name(),
        pool.namespace(),
        plan.objective() instanceof Objective.Budget ? "budget" : "prices",
        snapshot.capturedAt().toString(),
        snapshot.windowSeconds(),
        plan.budgetBytes() + held + reserved,
        plan.feasible(),
        plan.minimumBudgetBytes() + held + reserved,
        plan.usedBytes() + held + sidecarBytes,
        held,
        plan.level(),
        Forecast.of(plan.totalGcSecondsPerHour()),
        entries,
        snapshot.held(),
        CAUTION,
        sidecarBytes,
        surgeReserveBytes);
  }

  private static WorkloadEntry entry(WorkloadPlan p, Snapshot.Workload measured) {
    var w = p.workload();
    var evidence = measured.evidence();
    return new WorkloadEntry(
        w.name(),
        w.replicas(),
        w.liveBytes(),
        w.nonHeapBytes(),
        w.currentHeapBytes(),
        p.heapBytes(),
        p.limitBytes(),
        JvmOptions.withHeap("", p.heapBytes(), OptionalLong.empty()),
        w.gc().constantBytes(),
        w.gc().estimator().label(),
        w.gc().offsetBytes(),
        w.gc().heapIndependentFraction(),
        new YoungPart(
            w.gc().youngConstantBytes(),
            Share.of(w.gc().generations().youngShare(), w.gc().generations().youngShareMeasured())),
        Share.of(w.gc().generations().oldShare(), w.gc().generations().oldShareMeasured()),
        CurveFit.distinctHeaps(Planner.points(measured)),
        w.weight(),
        p.bound().label(),
        p.bounds().lowBytes(),
        p.bounds().highBytes(),
        new Comparison(p.linearRuleHeapBytes(), p.equalSplitHeapBytes()),
        Forecast.of(p.gcSecondsPerHour()),
        evidence.sampleCount(),
        evidence.confidence(),
        evidence.notes());
  }
}
