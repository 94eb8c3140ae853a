package dev.heapherd.input;

import com.fasterxml.jackson.annotation.JsonProperty;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.heapherd.engine.Objective;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.stream.Collectors;

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
 * @param metrics where and how to measure the pool's workloads
 * @param rollout how Apply mode changes workloads
 * @param approvedProposal the proposal hash an admin approved, empty when none
 */
public record PoolFile(
    String name,
    String namespace,
    Mode mode,
    Objective objective,
    Map<String, String> matchLabels,
    WorkloadSettings defaults,
    List<Override> overrides,
    Metrics metrics,
    Rollout rollout,
    String approvedProposal) {

  /** Whether heapherd may change the pool's workloads. */
  public enum Mode {
    /** Publish proposals and change nothing. */
    DryRun,
    /** Roll proposals out. */
    Apply
  }

  /** The query profiles; values are the names the pool file uses. */
  public enum Profile {
    micrometer,
    @JsonProperty("client-java")
    clientJava,
    otel
  }

  /** Who approves a proposal before it is applied. */
  public enum Approval {
    Manual,
    Automatic
  }

  /** Writes enum values by the names the pool file uses. */
  private static final ObjectMapper NAMES = new ObjectMapper();

  /** The names a pool file gives the values of {@code type}, as Jackson writes them. */
  static <E extends Enum<E>> Set<String> names(Class<E> type) {
    return Arrays.stream(type.getEnumConstants())
        .map(e -> NAMES.convertValue(e, String.class))
        .collect(Collectors.toUnmodifiableSet());
  }

  /** True when the pool may change its workloads. */
  public boolean applies() {
    return mode == Mode.Apply;
  }

  /**
   * How Apply mode changes workloads and the rails that keep it safe.
   *
   * @param containerName the container to resize; empty: the pod's first container
   * @param jvmOptionsVariable environment variable that carries the JVM options
   * @param setMemoryRequest also set the memory request to the new limit
   * @param setInitialHeap also write -Xms equal to -Xmx
   * @param automaticApproval apply any proposal, not only the approved hash
   * @param maxRollingWorkloads workloads of the pool rolling at one time
   * @param cooldownSeconds a workload is left alone this long after its last change
   * @param changeThresholdPercent changes where heap and limit both move less than this are skipped
   * @param metricsMaxAgeSeconds hold when the newest measurement is older
   * @param freezeWindows periods in which no change starts
   */
  public record Rollout(
      String containerName,
      String jvmOptionsVariable,
      boolean setMemoryRequest,
      boolean setInitialHeap,
      boolean automaticApproval,
      long maxRollingWorkloads,
      long cooldownSeconds,
      long changeThresholdPercent,
      long metricsMaxAgeSeconds,
      List<FreezeWindow> freezeWindows) {
    /** Copies the list. */
    public Rollout {
      freezeWindows = List.copyOf(freezeWindows);
    }

    /** Whether {@code at} falls in a freeze window. */
    public boolean frozenAt(java.time.Instant at) {
      return freezeWindows.stream().anyMatch(w -> !at.isBefore(w.start()) && at.isBefore(w.end()));
    }
  }

  /** A period, start inclusive and end exclusive, in which no rollout starts. */
  public record FreezeWindow(java.time.Instant start, java.time.Instant end) {}

  /** Settings for one named workload. */
  public record Override(String name, WorkloadSettings settings) {}

  /**
   * How to measure the pool's workloads in Prometheus.
   *
   * @param profile the query profile: how the JVMs export their metrics
   * @param windowSeconds the window rates and robust sizes are computed over
   * @param queries replacements for single templates of the profile, by signal name
   * @param workloadLabel label whose value names a pod's workload; empty: from the pod's name
   */
  public record Metrics(
      String profile, long windowSeconds, List<Query> queries, String workloadLabel) {
    /** Copies the list. */
    public Metrics {
      queries = List.copyOf(queries);
    }
  }

  /** One replaced template. */
  public record Query(String signal, String promql) {}

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
