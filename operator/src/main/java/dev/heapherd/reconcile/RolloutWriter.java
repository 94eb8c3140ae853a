package dev.heapherd.reconcile;

import dev.heapherd.input.PoolFile;
import dev.heapherd.observe.Observer;
import dev.heapherd.observe.PoolWorkload;
import dev.heapherd.rollout.Annotations;
import dev.heapherd.rollout.PodTemplates;
import dev.heapherd.rollout.RolloutRecord;
import dev.heapherd.rollout.RolloutStep;
import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.client.KubernetesClient;
import java.time.Instant;
import java.util.HashMap;
import java.util.Map;

/**
 * Writes rollout steps into workloads. Every write is one update of the whole object with its
 * resourceVersion as precondition: a concurrent change makes it fail with 409 and the reconcile is
 * retried from fresh observations, never half-applied.
 */
final class RolloutWriter {

  private final KubernetesClient client;

  RolloutWriter(KubernetesClient client) {
    this.client = client;
  }

  /** Writes the new heap and limit, and saves the previous values beside them. */
  HasMetadata start(
      PoolWorkload w, RolloutStep.Start step, PoolFile.Rollout rollout, String hash, Instant now) {
    var before =
        PodTemplates.read(w.template(), rollout.containerName(), rollout.jvmOptionsVariable())
            .orElseThrow();
    RolloutRecord record =
        new RolloutRecord(
            hash,
            before.limit(),
            before.request(),
            before.jvmOptions(),
            step.heapBytes(),
            step.limitBytes(),
            now.toString(),
            false);
    var template =
        PodTemplates.resized(
            w.template(),
            rollout.containerName(),
            rollout.jvmOptionsVariable(),
            step.heapBytes(),
            step.limitBytes(),
            rollout.setMemoryRequest(),
            rollout.setInitialHeap());
    Map<String, String> annotations = new HashMap<>(w.annotations());
    annotations.put(Annotations.ROLLOUT, record.toJson());
    annotations.remove(Annotations.ROLLED_BACK);
    return update(w.with(template, annotations));
  }

  /** Forgets the saved values of a finished rollout and starts the workload's cooldown. */
  HasMetadata finish(PoolWorkload w, Instant now) {
    Map<String, String> annotations = new HashMap<>(w.annotations());
    annotations.remove(Annotations.ROLLOUT);
    annotations.put(Annotations.CHANGED_AT, now.toString());
    return update(w.with(w.template(), annotations));
  }

  /**
   * Writes the saved values back and marks the workload so it is not retried unchanged. The record
   * stays, marked as rolling back, so the pods returning to the old sizes count against the budget
   * until that rollout finishes.
   */
  HasMetadata rollBack(
      PoolWorkload w, RolloutRecord record, PoolFile.Rollout rollout, Instant now) {
    var template =
        PodTemplates.restored(
            w.template(), rollout.containerName(), rollout.jvmOptionsVariable(), record);
    Map<String, String> annotations = new HashMap<>(w.annotations());
    annotations.put(Annotations.ROLLOUT, record.rolledBack().toJson());
    annotations.put(Annotations.CHANGED_AT, now.toString());
    annotations.put(Annotations.ROLLED_BACK, Observer.fingerprint(template));
    return update(w.with(template, annotations));
  }

  private HasMetadata update(PoolWorkload changed) {
    return client.resource(changed.resource()).update();
  }
}
