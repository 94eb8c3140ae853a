package dev.heapherd.api;

import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.annotation.JsonPropertyDescription;
import io.fabric8.kubernetes.api.model.Condition;
import java.util.ArrayList;
import java.util.List;

/** What the operator observed and decided for a pool. */
@JsonInclude(JsonInclude.Include.NON_NULL)
public class HeapPoolStatus {

  @JsonPropertyDescription("The spec generation this status was computed from.")
  public Long observedGeneration;

  @JsonPropertyDescription(
      "Ready, MetricsAvailable, BudgetFeasible, ProposalReady, RolloutInProgress, Degraded.")
  public List<Condition> conditions = new ArrayList<>();

  @JsonPropertyDescription("The current proposal: what the pool would look like after rollout.")
  public Proposal proposal;

  @JsonPropertyDescription("The latest actions on workloads, newest first.")
  public List<Action> history = new ArrayList<>();

  @JsonPropertyDescription(
      "Per workload: GC time measured under each heap it ran with (the points its curve is fitted"
          + " to) and how the last prediction compared with what was measured.")
  public List<WorkloadCurve> curves = new ArrayList<>();

  @JsonPropertyDescription(
      "The latest check of predictions against measurement, summed over the workloads checked.")
  public PredictionCheck lastPredictionCheck;

  @JsonPropertyDescription(
      "Path of the pool's review page (the latest computed plan, HTML) on the operator's HTTP"
          + " port, e.g. /pools/shop/checkout.")
  public String reviewPage;

  /** What is known of one workload's GC cost curve. */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  public static class WorkloadCurve {
    public String name;

    @JsonPropertyDescription("One point per heap, newest last; a few, so the status stays small.")
    public List<MeasuredPoint> points = new ArrayList<>();

    @JsonPropertyDescription("GC time predicted for the heap proposed, checked once it runs.")
    public PredictionCheck expected;

    @JsonPropertyDescription("The latest prediction of this workload checked against measurement.")
    public PredictionCheck lastCheck;
  }

  /** GC times measured under one heap. */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  public static class MeasuredPoint {
    public Long heapBytes;
    public Long liveBytes;
    public Double youngGcSecondsPerSecond;
    public Double oldGcSecondsPerSecond;
    public String measuredAt;
  }

  /** A prediction of GC time, and what was measured once it could be. */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  public static class PredictionCheck {
    public Long heapBytes;
    public Double predictedGcSecondsPerHour;
    public Double observedGcSecondsPerHour;
    public String time;
  }

  /** A proposal with its content hash. */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  public static class Proposal {
    @JsonPropertyDescription("Hash of the proposed heaps and limits; approve it by this value.")
    public String hash;

    @JsonPropertyDescription("When this proposal was first computed.")
    public String computedAt;

    @JsonPropertyDescription("Memory the pool may use: the budget, or the size prices chose.")
    public String memoryBudget;

    @JsonPropertyDescription("Sum of replicas x proposed limit, held workloads included.")
    public String memoryUsed;

    @JsonPropertyDescription("Sum of replicas x current limit, held workloads included.")
    public String memoryUsedNow;

    @JsonPropertyDescription("Predicted pool GC seconds per hour now.")
    public String gcSecondsPerHourBefore;

    @JsonPropertyDescription("Predicted pool GC seconds per hour after the proposal.")
    public String gcSecondsPerHourAfter;

    @JsonPropertyDescription("Relative change of pool GC time, e.g. -38%.")
    public String gcChange;

    @JsonPropertyDescription("Per workload: current and proposed sizes.")
    public List<ProposedWorkload> workloads = new ArrayList<>();

    @JsonPropertyDescription("Workloads kept as they are, with the reason.")
    public List<HeldWorkload> held = new ArrayList<>();
  }

  /** One workload's part of a proposal. */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  public static class ProposedWorkload {
    public String name;
    public String kind;
    public Integer replicas;
    public String currentHeap;
    public String proposedHeap;
    public String currentLimit;
    public String proposedLimit;
    public String gcSecondsPerHourBefore;
    public String gcSecondsPerHourAfter;

    @JsonPropertyDescription(
        "What decided the heap: none, floor, promotion-room, ceiling, step, kept-unpredictable or"
            + " old-unmeasured")
    public String bound;
  }

  /** A workload left as it is. */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  public static class HeldWorkload {
    public String name;
    public String reason;
  }

  /** Something the operator did to a workload. */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  public static class Action {
    public String time;
    public String workload;

    @JsonPropertyDescription("HeapRaised, HeapLowered, RolloutFinished, RolloutRolledBack.")
    public String action;

    public String fromHeap;
    public String toHeap;
    public String proposalHash;
    public String message;
  }
}
