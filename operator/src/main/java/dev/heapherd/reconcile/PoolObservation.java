package dev.heapherd.reconcile;

import dev.heapherd.api.HeapPool;
import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.observe.Observer;
import dev.heapherd.observe.PoolWorkload;
import dev.heapherd.rollout.WorkloadState;
import io.fabric8.kubernetes.api.model.Pod;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;

/**
 * What one visit sees of a pool in the caches: its spec, the workloads it selects and the state of
 * each.
 *
 * @param selected the pool's workloads by name
 * @param states their states, by name
 */
record PoolObservation(
    PoolFile spec, Map<String, PoolWorkload> selected, Map<String, WorkloadState> states) {

  /**
   * Observes {@code v}'s pool; empty when it cannot be reconciled, the reason then set in the
   * visit's Degraded condition.
   *
   * @param poolsOfNamespace every pool of the namespace, for the overlap checks
   */
  static Optional<PoolObservation> of(
      PoolVisit v, WorkloadCaches caches, List<HeapPool> poolsOfNamespace) {
    PoolFile spec;
    try {
      spec = PoolSpecs.read(v.pool());
    } catch (InputException e) {
      v.degraded("InvalidSpec", e.getMessage());
      return Optional.empty();
    }
    List<PoolWorkload> found = caches.select(v.namespace(), spec);
    var problem = PoolChecks.firstProblem(v.pool(), spec, found, poolsOfNamespace);
    if (problem.isPresent()) {
      v.degraded(problem.get().reason(), problem.get().message());
      return Optional.empty();
    }
    Map<String, PoolWorkload> selected = new LinkedHashMap<>();
    found.forEach(w -> selected.put(w.name(), w));
    List<Pod> podsNow = caches.pods(v.namespace());
    Map<String, WorkloadState> states = new LinkedHashMap<>();
    selected.forEach(
        (name, w) -> states.put(name, Observer.observe(w, podsNow, spec.rollout(), v.now())));
    return Optional.of(new PoolObservation(spec, selected, states));
  }

  /** Deployment or StatefulSet, by workload name. */
  Map<String, String> kinds() {
    Map<String, String> out = new LinkedHashMap<>();
    selected.forEach((n, w) -> out.put(n, w.kind()));
    return out;
  }

  /** Whether a change heapherd made is still rolling on some workload. */
  boolean anyInFlight() {
    return states.values().stream().anyMatch(s -> s.inFlight().isPresent());
  }
}
