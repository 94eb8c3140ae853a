package dev.heapherd.input;

import dev.heapherd.engine.Objective;
import java.util.List;
import java.util.Map;

/**
 * A HeapPool document as read from a file.
 *
 * @param name metadata.name
 * @param namespace metadata.namespace, empty when not given
 * @param mode DryRun or Apply
 * @param objective a memory budget or prices
 * @param matchLabels the workload selector
 * @param defaults settings for every workload of the pool
 * @param overrides settings for named workloads
 */
public record PoolFile(
    String name,
    String namespace,
    String mode,
    Objective objective,
    Map<String, String> matchLabels,
    WorkloadSettings defaults,
    List<Override> overrides) {

  /** Settings for one named workload. */
  public record Override(String name, WorkloadSettings settings) {}

  /** Makes the collections immutable. */
  public PoolFile {
    matchLabels = Map.copyOf(matchLabels);
    overrides = List.copyOf(overrides);
  }

  /** The effective settings of workload {@code workloadName}. */
  public WorkloadSettings settingsFor(String workloadName) {
    WorkloadSettings base = defaults.over(WorkloadSettings.BUILT_IN);
    return overrides.stream()
        .filter(o -> o.name().equals(workloadName))
        .findFirst()
        .map(o -> o.settings().over(base))
        .orElse(base);
  }
}
