package dev.heapherd.reconcile;

import dev.heapherd.input.PoolFile;
import dev.heapherd.observe.PoolWorkload;
import dev.heapherd.rollout.JvmOptions;
import dev.heapherd.rollout.PodTemplates;
import dev.heapherd.rollout.RolloutRecord;
import dev.heapherd.rollout.RolloutStep;
import dev.heapherd.rollout.WorkloadState;
import io.fabric8.kubernetes.api.model.HasMetadata;

/** Carries out the rollout planner's steps: writes the workload, records an Event, counts it. */
final class StepTaker {

  private final RolloutWriter writer;
  private final OperatorMetrics meters;

  StepTaker(RolloutWriter writer, OperatorMetrics meters) {
    this.writer = writer;
    this.meters = meters;
  }

  /** Takes {@code step} on workload {@code w}, whose state is {@code state}, and reports it. */
  void take(RolloutStep step, PoolVisit v, PoolFile spec, PoolWorkload w, WorkloadState state) {
    String pool = v.pool().getMetadata().getName();
    if (step instanceof RolloutStep.Start s) {
      HasMetadata written = writer.start(w, s, spec.rollout(), v.status().proposal.hash, v.now());
      String reason = s.grows() ? "HeapRaised" : "HeapLowered";
      v.act(
          written,
          reason,
          state.heapBytes(),
          s.heapBytes(),
          "rolling to heap "
              + PodTemplates.mebibytes(s.heapBytes())
              + ", limit "
              + PodTemplates.mebibytes(s.limitBytes()));
      meters.step(v.namespace(), pool, "started");
    } else if (step instanceof RolloutStep.Finish) {
      HasMetadata written = writer.finish(w, v.now());
      boolean back = state.inFlight().map(RolloutRecord::rollingBack).orElse(false);
      v.act(
          written,
          back ? "RollbackFinished" : "RolloutFinished",
          state.heapBytes(),
          state.heapBytes(),
          back ? "every pod runs the previous values again" : "every pod runs the new heap");
      meters.step(v.namespace(), pool, "finished");
    } else if (step instanceof RolloutStep.RollBack r) {
      var record = state.inFlight().orElseThrow();
      HasMetadata written = writer.rollBack(w, record, spec.rollout(), v.now());
      v.act(
          written,
          "RolloutRolledBack",
          record.targetHeapBytes(),
          record.previousJvmOptions() == null
              ? 0
              : JvmOptions.maxHeapBytes(record.previousJvmOptions()).orElse(0),
          r.reason() + "; previous values restored");
      meters.step(v.namespace(), pool, "rolledBack");
    } else if (step instanceof RolloutStep.Hold h) {
      v.held(h);
      meters.railTripped(v.namespace(), pool, h.rail().name());
    }
  }
}
