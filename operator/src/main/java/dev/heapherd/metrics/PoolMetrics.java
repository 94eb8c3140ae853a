package dev.heapherd.metrics;

import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Snapshot;
import java.time.Instant;
import java.util.Arrays;
import java.util.Collection;
import java.util.Optional;

/** Measures one pool's namespace with the query profile and overrides its spec names. */
public final class PoolMetrics {

  private PoolMetrics() {}

  /** The pool's query profile with its per-signal overrides; empty for an unknown profile. */
  public static Optional<QueryProfile> queries(String profileName, PoolFile.Metrics metrics) {
    Optional<QueryProfile> base = QueryProfiles.named(profileName);
    if (base.isEmpty()) {
      return base;
    }
    QueryProfile queries = base.get();
    for (PoolFile.Query q : metrics.queries()) {
      Signal signal =
          Arrays.stream(Signal.values())
              .filter(s -> s.key().equals(q.signal()))
              .findFirst()
              .orElseThrow(() -> new IllegalArgumentException("unknown signal " + q.signal()));
      queries = queries.withOverride(signal, q.promql());
    }
    return Optional.of(queries);
  }

  /**
   * Measures {@code namespace} through {@code client}; metrics failures become held workloads.
   *
   * @param expected workloads known to belong to the pool: held when not found
   */
  public static Snapshot measure(
      PrometheusClient client,
      QueryProfile queries,
      String workloadLabel,
      String namespace,
      long windowSeconds,
      Instant at,
      Collection<String> expected) {
    return new SnapshotBuilder(new FleetReader(client, queries), workloadLabel)
        .build(namespace, windowSeconds, at, expected);
  }
}
