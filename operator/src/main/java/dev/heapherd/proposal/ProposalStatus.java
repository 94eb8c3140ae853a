package dev.heapherd.proposal;

import dev.heapherd.api.HeapPoolStatus;
import dev.heapherd.engine.Objective;
import dev.heapherd.engine.PoolPlan;
import dev.heapherd.engine.WorkloadPlan;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Quantity;
import dev.heapherd.input.Snapshot;
import dev.heapherd.rollout.PodTemplates;
import dev.heapherd.rollout.WorkloadState;
import java.util.List;
import java.util.Locale;
import java.util.Map;

/** A plan as the pool's status publishes it: sizes, memory and GC time in the resource's units. */
final class ProposalStatus {

  private static final double PERCENT = 100.0;

  private ProposalStatus() {}

  /**
   * The proposal of {@code plan}, without its hash and time.
   *
   * @param sidecarBytes memory of the containers heapherd never resizes, taken from the budget
   * @param heldBytes memory of the held workloads, taken from the budget
   */
  static HeapPoolStatus.Proposal of(
      PoolFile pool,
      PoolPlan plan,
      Map<String, WorkloadState> states,
      Map<String, String> kinds,
      List<Snapshot.Held> held,
      long sidecarBytes,
      long heldBytes) {
    HeapPoolStatus.Proposal p = new HeapPoolStatus.Proposal();
    long usedNow = heldBytes;
    for (WorkloadPlan w : plan.workloads()) {
      WorkloadState s = states.get(w.workload().name());
      usedNow += s.steadyBytes();
      HeapPoolStatus.ProposedWorkload out = new HeapPoolStatus.ProposedWorkload();
      out.name = w.workload().name();
      out.kind = kinds.get(out.name);
      out.replicas = w.workload().replicas();
      out.currentHeap = PodTemplates.mebibytes(w.workload().currentHeapBytes());
      out.proposedHeap = PodTemplates.mebibytes(w.heapBytes());
      out.currentLimit = PodTemplates.mebibytes(s.podLimitBytes() - s.otherContainersBytes());
      out.proposedLimit = PodTemplates.mebibytes(w.limitBytes());
      out.gcSecondsPerHourBefore = seconds(w.gcSecondsPerHour().current());
      out.gcSecondsPerHourAfter = seconds(w.gcSecondsPerHour().proposed());
      out.bound = w.bound().label();
      p.workloads.add(out);
    }
    for (Snapshot.Held h : held) {
      HeapPoolStatus.HeldWorkload out = new HeapPoolStatus.HeldWorkload();
      out.name = h.name();
      out.reason = h.reason();
      p.held.add(out);
    }
    p.memoryBudget =
        Quantity.format(
            pool.objective() instanceof Objective.Budget b ? b.bytes() : plan.budgetBytes());
    p.memoryUsed = Quantity.format(plan.usedBytes() + sidecarBytes + heldBytes);
    p.memoryUsedNow = Quantity.format(usedNow);
    double before = plan.totalGcSecondsPerHour().current();
    double after = plan.totalGcSecondsPerHour().proposed();
    p.gcSecondsPerHourBefore = seconds(before);
    p.gcSecondsPerHourAfter = seconds(after);
    p.gcChange =
        before > 0
            ? String.format(Locale.ROOT, "%+.0f%%", PERCENT * (after - before) / before)
            : "";
    return p;
  }

  private static String seconds(double value) {
    return String.format(Locale.ROOT, "%.1f", value);
  }
}
