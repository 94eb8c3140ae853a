package dev.heapherd.metrics;

import dev.heapherd.input.ObjectNames;
import dev.heapherd.input.Snapshot;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Collection;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.TreeMap;

/** Builds a metrics snapshot of one namespace's JVM workloads from Prometheus. */
public final class SnapshotBuilder {

  private final FleetReader reader;
  private final String workloadLabel;

  /** A builder reading through {@code reader} that finds owners from pod names. */
  public SnapshotBuilder(FleetReader reader) {
    this(reader, "");
  }

  /**
   * A builder reading through {@code reader} that takes a pod's workload from the value of {@code
   * workloadLabel} on its series, or from its name when the label is empty.
   */
  public SnapshotBuilder(FleetReader reader, String workloadLabel) {
    this.reader = reader;
    this.workloadLabel = workloadLabel;
  }

  /**
   * Measures every workload found in {@code namespace} over the window ending at {@code at}.
   * Workloads named in {@code expected} but not found are held; when Prometheus cannot answer,
   * every expected workload is held with the reason. No exception escapes for a metrics failure.
   *
   * @param expected workloads the caller knows belong to the pool (may be empty)
   */
  public Snapshot build(
      String namespace, long windowSeconds, Instant at, Collection<String> expected) {
    List<PodSignals> pods;
    Map<String, String> labelled = Map.of();
    try {
      pods = reader.read(namespace, windowSeconds, at);
      if (!workloadLabel.isEmpty()) {
        labelled = reader.podLabel(namespace, workloadLabel, windowSeconds, at);
      }
    } catch (MetricsException e) {
      List<Snapshot.Held> held =
          expected.stream().map(name -> new Snapshot.Held(name, e.getMessage())).toList();
      return new Snapshot(at, windowSeconds, List.of(), held);
    }
    Map<PodOwners.Owner, List<PodSignals>> byOwner =
        new TreeMap<>(
            Comparator.comparing(PodOwners.Owner::name).thenComparing(PodOwners.Owner::kind));
    List<Snapshot.Held> held = new ArrayList<>();
    for (PodSignals pod : pods) {
      if (!namespace.equals(pod.namespace())) {
        // A query that lost its selector, or a relabelling that rewrote the namespace: another
        // namespace's pods must never be measured as this pool's workloads.
        held.add(
            new Snapshot.Held(
                pod.pod(),
                "pod of namespace \""
                    + pod.namespace()
                    + "\" answered a query for namespace \""
                    + namespace
                    + "\": dropped; check the pool's queries and relabelling"));
        continue;
      }
      var owner = owner(pod, labelled);
      if (owner.isPresent()) {
        byOwner.computeIfAbsent(owner.get(), o -> new ArrayList<>()).add(pod);
      } else {
        held.add(
            new Snapshot.Held(
                pod.pod(),
                workloadLabel.isEmpty()
                    ? "cannot tell which Deployment or StatefulSet owns this pod"
                    : "its series carry no " + workloadLabel + " label"));
      }
    }
    List<Snapshot.Workload> measured = new ArrayList<>();
    Set<String> seen = new LinkedHashSet<>();
    for (var entry : byOwner.entrySet()) {
      String name = entry.getKey().name();
      if (!seen.add(name)) {
        held.add(new Snapshot.Held(name, "both a Deployment and a StatefulSet have this name"));
        continue;
      }
      var estimate =
          WorkloadEstimator.estimate(
              name, entry.getKey().kind(), entry.getValue(), reader.profile().gcTimeSource());
      if (estimate instanceof WorkloadEstimator.Measured m) {
        measured.add(m.workload());
      } else {
        WorkloadEstimator.Held h = (WorkloadEstimator.Held) estimate;
        held.add(new Snapshot.Held(h.name(), h.reason()));
      }
    }
    for (String name : expected) {
      if (!seen.contains(name)) {
        held.add(new Snapshot.Held(name, "no pod of it was scraped in the window"));
      }
    }
    measured.removeIf(w -> held.stream().anyMatch(h -> h.name().equals(w.name())));
    measured.removeIf(w -> !ObjectNames.valid(w.name()));
    return new Snapshot(at, windowSeconds, measured, readable(held));
  }

  /**
   * The held entries as the snapshot reader accepts them: one per name, their reasons joined, and
   * none whose name no Deployment or StatefulSet can have (an empty pod label, a label value with
   * spaces), which could not be any of the pool's workloads.
   */
  private static List<Snapshot.Held> readable(List<Snapshot.Held> held) {
    Map<String, String> reasons = new LinkedHashMap<>();
    for (Snapshot.Held h : held) {
      if (ObjectNames.valid(h.name())) {
        reasons.merge(
            h.name(), h.reason(), (was, more) -> was.equals(more) ? was : was + "; " + more);
      }
    }
    return reasons.entrySet().stream()
        .map(e -> new Snapshot.Held(e.getKey(), e.getValue()))
        .toList();
  }

  /** The pod's owner: by label when one is configured (kind from the name, else Deployment). */
  private Optional<PodOwners.Owner> owner(PodSignals pod, Map<String, String> labelled) {
    if (workloadLabel.isEmpty()) {
      return PodOwners.of(pod.pod());
    }
    String name = labelled.get(pod.namespace() + "/" + pod.pod());
    if (name == null) {
      return Optional.empty();
    }
    String kind = PodOwners.of(pod.pod()).map(PodOwners.Owner::kind).orElse("Deployment");
    return Optional.of(new PodOwners.Owner(kind, name));
  }
}
