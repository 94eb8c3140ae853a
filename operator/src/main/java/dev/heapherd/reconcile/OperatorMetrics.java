package dev.heapherd.reconcile;

import dev.heapherd.api.HeapPool;
import dev.heapherd.api.HeapPoolStatus;
import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.Meter;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tag;
import io.micrometer.core.instrument.Tags;
import io.micrometer.core.instrument.Timer;
import io.micrometer.core.instrument.binder.MeterBinder;
import java.time.Duration;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.atomic.AtomicReference;
import java.util.stream.Collectors;
import java.util.stream.Stream;

/**
 * heapherd's own meters: what it proposes, what it changes and how long it takes. Bound to a
 * registry once; its meters are registered there per pool as pools are visited, and removed with
 * their pool.
 */
public final class OperatorMetrics implements MeterBinder {

  private static final String PREFIX = "heapherd.";
  private static final String NAMESPACE = "namespace";
  private static final String POOL = "pool";
  private static final String WORKLOAD = "workload";

  /** Key of the cache of gauges only: which meter the tags belong to. */
  private static final String METER = "meter";

  private volatile MeterRegistry registry;
  private final Map<Tags, AtomicReference<Double>> gauges = new ConcurrentHashMap<>();

  /** Registers its meters into {@code registry} from now on. */
  @Override
  public void bindTo(MeterRegistry registry) {
    this.registry = registry;
  }

  private MeterRegistry registry() {
    MeterRegistry bound = registry;
    if (bound == null) {
      // A wiring defect of ours: the runtime binds the meters before any pool is visited.
      throw new IllegalStateException("OperatorMetrics used before bindTo");
    }
    return bound;
  }

  /** The heap a workload runs with now and the one proposed for it. */
  void heap(String namespace, String pool, String workload, long currentBytes, long proposedBytes) {
    Tags tags = Tags.of(NAMESPACE, namespace, POOL, pool, WORKLOAD, workload);
    gauge("workload.heap.current", "Heap limit the workload's pods run with", "bytes", tags)
        .set((double) currentBytes);
    gauge("workload.heap.proposed", "Heap limit heapherd proposes for the workload", "bytes", tags)
        .set((double) proposedBytes);
  }

  /** The pool's predicted GC time now and under the proposal. */
  void predictedGc(
      String namespace, String pool, double beforeSecondsPerHour, double afterSecondsPerHour) {
    Tags tags = Tags.of(NAMESPACE, namespace, POOL, pool);
    gauge(
            "pool.gc.predicted.current",
            "Predicted GC seconds per hour at current heaps",
            "seconds",
            tags)
        .set(beforeSecondsPerHour);
    gauge(
            "pool.gc.predicted.proposed",
            "Predicted GC seconds per hour at proposed heaps",
            "seconds",
            tags)
        .set(afterSecondsPerHour);
  }

  /** A workload's predicted GC time at a heap and what was measured once it ran with it. */
  void checkedGc(
      String namespace,
      String pool,
      String workload,
      double predictedSecondsPerHour,
      double observedSecondsPerHour) {
    Tags tags = Tags.of(NAMESPACE, namespace, POOL, pool, WORKLOAD, workload);
    gauge(
            "workload.gc.checked.predicted",
            "GC seconds per hour predicted for the heap the workload now runs with",
            "seconds",
            tags)
        .set(predictedSecondsPerHour);
    gauge(
            "workload.gc.checked.observed",
            "GC seconds per hour measured once the workload ran with the predicted heap",
            "seconds",
            tags)
        .set(observedSecondsPerHour);
  }

  /** One rollout step taken: started, finished or rolled back. */
  void step(String namespace, String pool, String step) {
    Counter.builder(PREFIX + "rollout.steps")
        .description("Rollout steps heapherd took on workloads")
        .tags(NAMESPACE, namespace, POOL, pool, "step", step)
        .register(registry())
        .increment();
  }

  /** A safety rail held a workload back. */
  void railTripped(String namespace, String pool, String rail) {
    Counter.builder(PREFIX + "rails.tripped")
        .description("Times a safety rail held a workload back")
        .tags(NAMESPACE, namespace, POOL, pool, "rail", rail)
        .register(registry())
        .increment();
  }

  /**
   * Histogram buckets of the reconcile time, so that quantiles over pools can be computed in PromQL
   * (histogram_quantile): from a cached visit (milliseconds) to one waiting on a slow Prometheus
   * (the query timeout is 30 s). Twelve per pool keeps the series few; our choice.
   */
  private static final Duration[] RECONCILE_BUCKETS = {
    Duration.ofMillis(5),
    Duration.ofMillis(10),
    Duration.ofMillis(25),
    Duration.ofMillis(50),
    Duration.ofMillis(100),
    Duration.ofMillis(250),
    Duration.ofMillis(500),
    Duration.ofSeconds(1),
    Duration.ofMillis(2500),
    Duration.ofSeconds(5),
    Duration.ofSeconds(10),
    Duration.ofSeconds(30)
  };

  /** How long one reconcile of a pool took. */
  void reconciled(String namespace, String pool, Duration took) {
    Timer.builder(PREFIX + "reconcile.duration")
        .description("Time to reconcile one pool")
        .tags(NAMESPACE, namespace, POOL, pool)
        .serviceLevelObjectives(RECONCILE_BUCKETS)
        .register(registry())
        .record(took);
  }

  /**
   * Drops the meters of pools that no longer exist ({@code existing}) and of workloads {@code
   * pool}'s proposal no longer names. Pools carry no finalizer, so a deleted pool is noticed here,
   * at the next visit of any.
   */
  void retainAfterVisit(Stream<HeapPool> existing, HeapPool pool, HeapPoolStatus status) {
    Set<String> pools = existing.map(OperatorMetrics::key).collect(Collectors.toSet());
    Map<String, Set<String>> workloads = new HashMap<>();
    if (status.proposal != null) {
      workloads.put(
          key(pool),
          status.proposal.workloads.stream().map(w -> w.name).collect(Collectors.toSet()));
    }
    retain(pools, workloads);
  }

  private static String key(HeapPool pool) {
    return pool.getMetadata().getNamespace() + "/" + pool.getMetadata().getName();
  }

  /**
   * Removes every meter of a pool not in {@code pools} (namespace/name keys), and of a workload
   * that has left its pool, so the series of a deleted pool or a workload it no longer selects go
   * away rather than report their last value for ever.
   *
   * @param workloads by pool key, the workloads each live pool selects now; pools missing from this
   *     map keep their workload meters
   */
  void retain(Set<String> pools, Map<String, Set<String>> workloads) {
    for (Meter meter : List.copyOf(registry().getMeters())) {
      Meter.Id id = meter.getId();
      if (!id.getName().startsWith(PREFIX) || id.getTag(POOL) == null) {
        continue;
      }
      String pool = id.getTag(NAMESPACE) + "/" + id.getTag(POOL);
      Set<String> selected = workloads.get(pool);
      boolean gone =
          !pools.contains(pool)
              || (id.getTag(WORKLOAD) != null
                  && selected != null
                  && !selected.contains(id.getTag(WORKLOAD)));
      if (gone) {
        registry().remove(meter);
        gauges.keySet().removeIf(k -> k.stream().allMatch(t -> tagOf(id, t)));
      }
    }
  }

  private static boolean tagOf(Meter.Id id, Tag tag) {
    return tag.getKey().equals(METER)
        ? id.getName().equals(PREFIX + tag.getValue())
        : tag.getValue().equals(id.getTag(tag.getKey()));
  }

  private AtomicReference<Double> gauge(String name, String description, String unit, Tags tags) {
    Tags key = tags.and(METER, name);
    return gauges.computeIfAbsent(
        key,
        k -> {
          AtomicReference<Double> value = new AtomicReference<>(0.0);
          Gauge.builder(PREFIX + name, value, AtomicReference::get)
              .description(description)
              .baseUnit(unit)
              .tags(tags)
              .register(registry());
          return value;
        });
  }
}
