package dev.heapherd.lab;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.Timer;
import io.micrometer.core.instrument.binder.jvm.JvmGcMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmHeapPressureMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmMemoryMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmThreadMetrics;
import io.micrometer.core.instrument.binder.system.ProcessorMetrics;
import io.micrometer.core.instrument.binder.system.UptimeMetrics;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.util.concurrent.atomic.AtomicLong;

/**
 * A service's Micrometer registry: the JVM binders Spring Boot's actuator registers, tagged with
 * {@code application=<app>}, and the lab's own operation counters.
 */
public final class LabMetrics implements AutoCloseable {

  private final PrometheusMeterRegistry registry =
      new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
  private final JvmGcMetrics gcMetrics = new JvmGcMetrics();
  private final JvmHeapPressureMetrics heapPressureMetrics;
  private final Counter operations;
  private final Counter droppedOperations;
  private final Counter failedOperations;
  private final Timer operationTime;
  private final AtomicLong liveSetBytes = new AtomicLong();

  /** Metrics of service {@code app} paced at {@code targetOpsPerSecond}. */
  public LabMetrics(String app, double targetOpsPerSecond) {
    registry.config().commonTags("application", app);
    gcMetrics.bindTo(registry);
    heapPressureMetrics = new JvmHeapPressureMetrics();
    heapPressureMetrics.bindTo(registry);
    new JvmMemoryMetrics().bindTo(registry);
    new JvmThreadMetrics().bindTo(registry);
    new ProcessorMetrics().bindTo(registry);
    new UptimeMetrics().bindTo(registry);
    operations =
        Counter.builder("lab.operations").description("Operations completed").register(registry);
    droppedOperations =
        Counter.builder("lab.operations.dropped")
            .description("Operation slots skipped because the service fell over a second behind")
            .register(registry);
    failedOperations =
        Counter.builder("lab.operations.failed")
            .description("Operations that threw")
            .register(registry);
    operationTime =
        Timer.builder("lab.operation").description("Time of one operation").register(registry);
    Gauge.builder("lab.target.operations.per.second", () -> targetOpsPerSecond)
        .description("Operations per second the pacer aims at")
        .register(registry);
    Gauge.builder("lab.live.set.bytes", liveSetBytes, AtomicLong::get)
        .description("Heap in use after a full GC once the live set was built")
        .baseUnit("bytes")
        .register(registry);
  }

  /** The registry, for library binders such as Caffeine's. */
  public PrometheusMeterRegistry registry() {
    return registry;
  }

  /** Counts one completed operation that took {@code nanos}. */
  public void completed(long nanos) {
    operations.increment();
    operationTime.record(nanos, java.util.concurrent.TimeUnit.NANOSECONDS);
  }

  /** Counts operation slots the pacer skipped. */
  public void dropped(long count) {
    droppedOperations.increment(count);
  }

  /** Counts one failed operation. */
  public void failed() {
    failedOperations.increment();
  }

  /** Records the live set measured after loading. */
  public void liveSet(long bytes) {
    liveSetBytes.set(bytes);
  }

  /** Operations completed so far. */
  public double completedCount() {
    return operations.count();
  }

  /** The Prometheus text exposition of every meter. */
  public String scrape() {
    return registry.scrape();
  }

  @Override
  public void close() {
    gcMetrics.close();
    heapPressureMetrics.close();
    registry.close();
  }
}
