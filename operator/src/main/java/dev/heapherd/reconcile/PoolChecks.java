package dev.heapherd.reconcile;

import dev.heapherd.api.HeapPool;
import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.observe.PoolWorkload;
import dev.heapherd.rollout.PodTemplates;
import java.util.ArrayList;
import java.util.Collection;
import java.util.List;
import java.util.Optional;
import java.util.Set;
import java.util.stream.Collectors;

/**
 * The checks that stop a pool before anything is planned: containers heapherd cannot resize,
 * workloads in two pools.
 */
final class PoolChecks {

  private PoolChecks() {}

  /** Why a pool stops: the Degraded reason and its message. */
  record Problem(String reason, String message) {}

  /**
   * The first check {@code found}, the workloads {@code pool} selects, fails, in the order an admin
   * would fix them: none selected, a container heapherd cannot resize, a workload in two pools.
   */
  static Optional<Problem> firstProblem(
      HeapPool pool, PoolFile spec, List<PoolWorkload> found, List<HeapPool> poolsOfNamespace) {
    if (found.isEmpty()) {
      return Optional.of(
          new Problem(
              "NoWorkloads",
              "no Deployment or StatefulSet in namespace "
                  + pool.getMetadata().getNamespace()
                  + " carries the labels "
                  + spec.matchLabels()));
    }
    String containers = containers(found, spec.rollout());
    if (!containers.isEmpty()) {
      return Optional.of(new Problem("WorkloadNotChangeable", containers));
    }
    String shared = sharedWithOtherPools(pool, found, poolsOfNamespace);
    if (!shared.isEmpty()) {
      return Optional.of(new Problem("WorkloadInTwoPools", shared));
    }
    return Optional.empty();
  }

  /**
   * Workloads another valid pool of the namespace also selects. Two pools resizing one workload
   * would undo each other's changes and count its memory twice, so both stop until an admin narrows
   * a selector.
   */
  private static String sharedWithOtherPools(
      HeapPool pool, List<PoolWorkload> found, List<HeapPool> poolsOfNamespace) {
    List<String> shared = new ArrayList<>();
    for (HeapPool other : poolsOfNamespace) {
      if (other.getMetadata().getName().equals(pool.getMetadata().getName())) {
        continue;
      }
      PoolFile otherSpec;
      try {
        otherSpec = PoolSpecs.read(other);
      } catch (InputException e) {
        // An invalid pool changes nothing, so it shares nothing.
        continue;
      }
      for (PoolWorkload w : found) {
        if (w.labels().entrySet().containsAll(otherSpec.matchLabels().entrySet())) {
          shared.add(w.name() + " (also in pool " + other.getMetadata().getName() + ")");
        }
      }
    }
    return shared.isEmpty()
        ? ""
        : "workloads selected by more than one pool: "
            + String.join(", ", shared)
            + "; narrow a selector so each workload is in one pool";
  }

  /** Why some workload cannot be resized as the spec says, or empty. */
  private static String containers(Collection<PoolWorkload> workloads, PoolFile.Rollout r) {
    List<String> problems = new ArrayList<>();
    for (PoolWorkload w : workloads) {
      var m = PodTemplates.read(w.template(), r.containerName(), r.jvmOptionsVariable());
      if (m.isEmpty()) {
        problems.add(
            w.kind() + " " + w.name() + " has no container named \"" + r.containerName() + "\"");
      } else if (m.get().jvmOptionsFromReference()) {
        problems.add(
            w.kind()
                + " "
                + w.name()
                + " takes "
                + r.jvmOptionsVariable()
                + " from a reference (ConfigMap, Secret or field); heapherd writes only literal values");
      } else {
        m.get().problem().ifPresent(p -> problems.add(w.kind() + " " + w.name() + ": " + p));
      }
    }
    Set<String> names = workloads.stream().map(PoolWorkload::name).collect(Collectors.toSet());
    if (names.size() < workloads.size()) {
      problems.add(
          "a Deployment and a StatefulSet share a name; rename one or narrow the selector");
    }
    return String.join("; ", problems);
  }
}
