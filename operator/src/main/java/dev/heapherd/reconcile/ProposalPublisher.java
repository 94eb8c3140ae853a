package dev.heapherd.reconcile;

import dev.heapherd.api.HeapPoolStatus;
import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Quantity;
import dev.heapherd.input.Snapshot;
import dev.heapherd.proposal.ProposalBuilder;
import dev.heapherd.proposal.StickyProposal;
import dev.heapherd.rollout.WorkloadState;
import java.util.Locale;
import java.util.Map;

/**
 * Publishes a visit's proposal: status.proposal and its conditions (ProposalReady, BudgetFeasible),
 * the curve history and its checked predictions, events and gauges.
 */
final class ProposalPublisher {

  private ProposalPublisher() {}

  /**
   * Computes and publishes the proposal. With {@code keepPublished} (a rollout runs, or the
   * approved proposal is still being applied) the published one stays, so it is finished as
   * approved.
   */
  static void publish(
      PoolVisit v,
      PoolFile spec,
      Map<String, WorkloadState> states,
      Map<String, String> kinds,
      Snapshot snapshot,
      boolean keepPublished,
      OperatorMetrics meters,
      ReviewPages pages) {
    Snapshot learned = CurveHistory.withHistory(snapshot, v.status());
    for (CurveHistory.Check check : CurveHistory.record(v.status(), snapshot, v.now())) {
      checked(v, check, meters);
    }
    ProposalBuilder.Result fresh;
    try {
      fresh = ProposalBuilder.build(spec, states, kinds, learned, v.now());
    } catch (InputException e) {
      v.set(Conditions.PROPOSAL_READY, Conditions.FALSE, "CannotPlan", e.getMessage());
      v.set(Conditions.BUDGET_FEASIBLE, Conditions.UNKNOWN, "CannotPlan", "no plan was computed");
      if (!keepPublished) {
        // A proposal nobody is applying would only mislead once its inputs are gone.
        v.status().proposal = null;
      }
      return;
    }
    var plan = fresh.plan();
    String name = v.pool().getMetadata().getName();
    pages.put(v.namespace(), name, fresh.document(spec));
    v.status().reviewPage = ReviewPages.path(v.namespace(), name);
    if (plan.feasible()) {
      v.set(
          Conditions.BUDGET_FEASIBLE,
          Conditions.TRUE,
          "WithinBudget",
          "every heap fits above its floor");
    } else {
      v.set(
          Conditions.BUDGET_FEASIBLE,
          Conditions.FALSE,
          "BudgetTooSmall",
          "the heap floors alone need "
              + Quantity.format(plan.minimumBudgetBytes())
              + "; heaps are proposed at their floors");
    }
    HeapPoolStatus.Proposal previous = v.status().proposal;
    HeapPoolStatus.Proposal chosen =
        keepPublished && previous != null
            ? previous
            : StickyProposal.choose(
                previous, fresh.proposal(), spec.rollout().changeThresholdPercent());
    v.status().proposal = chosen;
    CurveHistory.expect(v.status());
    v.set(Conditions.PROPOSAL_READY, Conditions.TRUE, "Computed", "proposal " + chosen.hash);
    if (previous == null || !chosen.hash.equals(previous.hash)) {
      v.events()
          .record(
              v.pool(),
              v.pool(),
              PoolEvents.NORMAL,
              "ProposalComputed",
              "proposal "
                  + chosen.hash
                  + ": pool GC "
                  + chosen.gcSecondsPerHourBefore
                  + " -> "
                  + chosen.gcSecondsPerHourAfter
                  + " s/h, memory "
                  + chosen.memoryUsed
                  + " of "
                  + chosen.memoryBudget);
    }
    for (var w : chosen.workloads) {
      meters.heap(
          v.namespace(),
          v.poolName(),
          w.name,
          Quantity.parseBytes(w.currentHeap),
          Quantity.parseBytes(w.proposedHeap));
    }
    meters.predictedGc(
        v.namespace(),
        v.poolName(),
        Double.parseDouble(chosen.gcSecondsPerHourBefore),
        Double.parseDouble(chosen.gcSecondsPerHourAfter));
  }

  /** Publishes one prediction checked against measurement: an event and two gauges. */
  private static void checked(PoolVisit v, CurveHistory.Check check, OperatorMetrics meters) {
    v.events()
        .record(
            v.pool(),
            v.pool(),
            PoolEvents.NORMAL,
            "GcPredictionChecked",
            String.format(
                Locale.ROOT,
                "%s at heap %s: predicted %.1f GC s/h, measured %.1f (%+.0f%%)",
                check.workload(),
                Quantity.format(check.heapBytes()),
                check.predicted(),
                check.observed(),
                check.predicted() > 0
                    ? 100 * (check.observed() - check.predicted()) / check.predicted()
                    : 0));
    meters.checkedGc(
        v.namespace(), v.poolName(), check.workload(), check.predicted(), check.observed());
  }
}
