package dev.heapherd.metrics;

import java.util.EnumMap;
import java.util.Map;
import java.util.OptionalDouble;
import java.util.Set;

/**
 * What the profile's queries said about one pod.
 *
 * @param namespace the pod's namespace
 * @param pod the pod's name
 * @param values per signal, where a query answered for this pod
 * @param liveFromFallback true when live bytes came from a later template than the first
 * @param collectorNames GarbageCollectorMXBean names seen for this pod
 * @param liveGrowth how much the after-GC live figure grew from the window's first half to its
 *     second, as a fraction; NaN when either half has no such figure
 */
public record PodSignals(
    String namespace,
    String pod,
    Map<Signal, Double> values,
    boolean liveFromFallback,
    Set<String> collectorNames,
    double liveGrowth) {

  /** Copies the collections. */
  public PodSignals {
    values = values.isEmpty() ? Map.of() : Map.copyOf(new EnumMap<>(values));
    collectorNames = Set.copyOf(collectorNames);
  }

  /** The value of {@code signal}, if a query answered for this pod. */
  public OptionalDouble value(Signal signal) {
    Double v = values.get(signal);
    return v == null ? OptionalDouble.empty() : OptionalDouble.of(v);
  }
}
