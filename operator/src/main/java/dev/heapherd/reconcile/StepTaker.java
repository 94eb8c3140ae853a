package dev.heapherd.reconcile;

import dev.heapherd.api.HeapPoolStatus;
import dev.heapherd.engine.Objective;
import dev.heapherd.input.PoolFile;
import dev.heapherd.observe.PoolWorkload;
import dev.heapherd.proposal.ProposalBuilder;
import dev.heapherd.rollout.JvmOptions;
import dev.heapherd.rollout.PodTemplates;
import dev.heapherd.rollout.RolloutPlanner;
import dev.heapherd.rollout.RolloutRecord;
import dev.heapherd.rollout.RolloutStep;
import dev.heapherd.rollout.WorkloadState;
import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.client.KubernetesClientException;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.OptionalLong;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Carries out the rollout planner's steps in Apply mode: writes the workload, records an Event,
 * counts it.
 */
final class StepTaker {

  private static final Logger LOG = LoggerFactory.getLogger(StepTaker.class);

  private final RolloutWriter writer;
  private final OperatorMetrics meters;

  StepTaker(RolloutWriter writer, OperatorMetrics meters) {
    this.writer = writer;
    this.meters = meters;
  }

  /**
   * Takes every step the rollout planner allows now towards the published proposal, in Apply mode
   * only, and returns those written (none in DryRun).
   *
   * @param metricsHeld why the pool's metrics cannot be trusted now, empty when they can
   */
  List<RolloutStep> takeAllowed(
      PoolVisit v,
      PoolFile spec,
      Map<String, PoolWorkload> selected,
      Map<String, WorkloadState> states,
      String metricsHeld) {
    if (!spec.applies()) {
      return List.of();
    }
    HeapPoolStatus.Proposal p = v.status().proposal;
    var gates =
        new RolloutPlanner.Gates(
            p != null
                && (spec.rollout().automaticApproval() || p.hash.equals(spec.approvedProposal())),
            spec.rollout().frozenAt(v.now()),
            metricsHeld,
            spec.rollout().maxRollingWorkloads(),
            spec.rollout().cooldownSeconds(),
            spec.rollout().changeThresholdPercent(),
            spec.objective() instanceof Objective.Budget b
                ? OptionalLong.of(b.bytes())
                : OptionalLong.empty(),
            v.now());
    List<RolloutStep> steps =
        RolloutPlanner.decide(
            new ArrayList<>(states.values()),
            p == null ? Map.of() : ProposalBuilder.targets(p),
            gates);
    List<RolloutStep> taken = new ArrayList<>();
    for (RolloutStep step : steps) {
      try {
        take(step, v, spec, selected.get(step.workload()), states.get(step.workload()));
      } catch (KubernetesClientException e) {
        if (taken.isEmpty()) {
          // Nothing written yet: the framework retries the whole visit with backoff.
          throw e;
        }
        // Steps already written must reach the status (history, events) in this visit; the
        // rest are planned again at the next one, which the running rollout brings soon.
        LOG.warn("pool {}: {} not taken yet: {}", v.namespace(), step.workload(), e.getMessage());
        break;
      }
      taken.add(step);
    }
    return taken;
  }

  /** Takes {@code step} on workload {@code w}, whose state is {@code state}, and reports it. */
  private void take(
      RolloutStep step, PoolVisit v, PoolFile spec, PoolWorkload w, WorkloadState state) {
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
