package dev.heapherd.reconcile;

import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Snapshot;
import dev.heapherd.metrics.PoolMetrics;
import dev.heapherd.metrics.PrometheusClient;
import java.time.Instant;
import java.util.Collection;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;

/**
 * Measures pools in Prometheus, at most once per refresh interval per pool, so frequent reconciles
 * (workload events, rollouts) do not multiply queries.
 */
public final class PrometheusMetricsSource implements MetricsSource {

  private final PrometheusClient client;
  private final long refreshSeconds;
  private final Map<String, Snapshot> last = new ConcurrentHashMap<>();

  /** Queries through {@code client}, reusing a measurement for {@code refreshSeconds}. */
  public PrometheusMetricsSource(PrometheusClient client, long refreshSeconds) {
    this.client = client;
    this.refreshSeconds = refreshSeconds;
  }

  @Override
  public Snapshot measure(
      PoolFile pool, String namespace, Collection<String> workloads, Instant now) {
    String key = namespace + "/" + pool.name();
    Snapshot cached = last.get(key);
    if (cached != null
        && now.isBefore(cached.capturedAt().plusSeconds(refreshSeconds))
        && covers(cached, workloads)) {
      return cached;
    }
    var queries = PoolMetrics.queries(pool.metrics().profile(), pool.metrics());
    if (queries.isEmpty()) {
      String reason = "unknown metrics profile " + pool.metrics().profile();
      return new Snapshot(
          now,
          pool.metrics().windowSeconds(),
          List.of(),
          workloads.stream().map(w -> new Snapshot.Held(w, reason)).toList());
    }
    Snapshot fresh =
        PoolMetrics.measure(
            client,
            queries.get(),
            pool.metrics().workloadLabel(),
            namespace,
            pool.metrics().windowSeconds(),
            now,
            workloads);
    last.put(key, fresh);
    return fresh;
  }

  private static boolean covers(Snapshot s, Collection<String> workloads) {
    var known = new java.util.HashSet<String>();
    s.workloads().forEach(w -> known.add(w.name()));
    s.held().forEach(h -> known.add(h.name()));
    return known.containsAll(workloads);
  }
}
