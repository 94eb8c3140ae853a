package dev.heapherd.reconcile;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tags;
import io.micrometer.core.instrument.Timer;
import java.time.Duration;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.atomic.AtomicReference;

/** heapherd's own meters: what it proposes, what it changes and how long it takes. */
public final class OperatorMetrics {

  private static final String PREFIX = "heapherd.";

  private final MeterRegistry registry;
  private final Map<Tags, AtomicReference<Double>> gauges = new ConcurrentHashMap<>();

  /** Registers into {@code registry}. */
  public OperatorMetrics(MeterRegistry registry) {
    this.registry = registry;
  }

  /** The heap a workload runs with now and the one proposed for it. */
  void heap(String namespace, String pool, String workload, long currentBytes, long proposedBytes) {
    Tags tags = Tags.of("namespace", namespace, "pool", pool, "workload", workload);
    gauge("workload.heap.current", "Heap limit the workload's pods run with", "bytes", tags)
        .set((double) currentBytes);
    gauge("workload.heap.proposed", "Heap limit heapherd proposes for the workload", "bytes", tags)
        .set((double) proposedBytes);
  }

  /** The pool's predicted GC time now and under the proposal. */
  void predictedGc(
      String namespace, String pool, double beforeSecondsPerHour, double afterSecondsPerHour) {
    Tags tags = Tags.of("namespace", namespace, "pool", pool);
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
    Tags tags = Tags.of("namespace", namespace, "pool", pool, "workload", workload);
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
        .tags("namespace", namespace, "pool", pool, "step", step)
        .register(registry)
        .increment();
  }

  /** A safety rail held a workload back. */
  void railTripped(String namespace, String pool, String rail) {
    Counter.builder(PREFIX + "rails.tripped")
        .description("Times a safety rail held a workload back")
        .tags("namespace", namespace, "pool", pool, "rail", rail)
        .register(registry)
        .increment();
  }

  /** How long one reconcile of a pool took. */
  void reconciled(String namespace, String pool, Duration took) {
    Timer.builder(PREFIX + "reconcile.duration")
        .description("Time to reconcile one pool")
        .tags("namespace", namespace, "pool", pool)
        .register(registry)
        .record(took);
  }

  private AtomicReference<Double> gauge(String name, String description, String unit, Tags tags) {
    Tags key = tags.and("meter", name);
    return gauges.computeIfAbsent(
        key,
        k -> {
          AtomicReference<Double> value = new AtomicReference<>(0.0);
          Gauge.builder(PREFIX + name, value, AtomicReference::get)
              .description(description)
              .baseUnit(unit)
              .tags(tags)
              .register(registry);
          return value;
        });
  }
}
