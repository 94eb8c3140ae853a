package dev.heapherd.synthetic;

import com.sun.net.httpserver.HttpHandler;
import io.micrometer.core.instrument.binder.jvm.ClassLoaderMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmGcMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmHeapPressureMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmMemoryMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmThreadMetrics;
import io.micrometer.core.instrument.binder.system.ProcessorMetrics;
import io.micrometer.core.instrument.binder.system.UptimeMetrics;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import io.prometheus.metrics.exporter.httpserver.MetricsHandler;
import io.prometheus.metrics.instrumentation.jvm.JvmMetrics;
import io.prometheus.metrics.model.registry.PrometheusRegistry;
import java.util.ArrayList;
import java.util.List;
import java.util.Optional;

/** The JVM metrics of one instrumentation, and the /metrics handler that serves them if any. */
final class MetricsExposure implements AutoCloseable {

  /** A class the OpenTelemetry Java agent puts on the system class path when it is attached. */
  static final String OTEL_AGENT_CLASS = "io.opentelemetry.javaagent.OpenTelemetryAgent";

  private final Optional<HttpHandler> handler;
  private final List<AutoCloseable> closeables;

  private MetricsExposure(Optional<HttpHandler> handler, List<AutoCloseable> closeables) {
    this.handler = handler;
    this.closeables = closeables;
  }

  /**
   * Sets up the metrics for {@code instrumentation}; for otel it only checks that the agent is
   * attached, since the agent serves the metrics on its own port.
   */
  static MetricsExposure install(Instrumentation instrumentation) throws OptionException {
    return switch (instrumentation) {
      case MICROMETER -> micrometer();
      case CLIENT_JAVA -> clientJava();
      case OTEL -> otelAgent();
    };
  }

  /** The /metrics handler, empty when another component serves the metrics. */
  Optional<HttpHandler> handler() {
    return handler;
  }

  @Override
  public void close() throws Exception {
    for (AutoCloseable closeable : closeables) {
      closeable.close();
    }
  }

  private static MetricsExposure micrometer() {
    PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
    List<AutoCloseable> closeables = new ArrayList<>();
    // The binders Spring Boot's actuator registers for GC, memory and the process.
    JvmGcMetrics gcMetrics = new JvmGcMetrics();
    gcMetrics.bindTo(registry);
    closeables.add(gcMetrics);
    JvmHeapPressureMetrics heapPressureMetrics = new JvmHeapPressureMetrics();
    heapPressureMetrics.bindTo(registry);
    closeables.add(heapPressureMetrics);
    new JvmMemoryMetrics().bindTo(registry);
    new JvmThreadMetrics().bindTo(registry);
    new ClassLoaderMetrics().bindTo(registry);
    new ProcessorMetrics().bindTo(registry);
    new UptimeMetrics().bindTo(registry);
    closeables.add(registry::close);
    // Micrometer's registry is backed by a client_java registry, so one handler serves both.
    return new MetricsExposure(
        Optional.of(new MetricsHandler(registry.getPrometheusRegistry())), closeables);
  }

  private static MetricsExposure clientJava() {
    PrometheusRegistry registry = new PrometheusRegistry();
    JvmMetrics.builder().register(registry);
    return new MetricsExposure(Optional.of(new MetricsHandler(registry)), List.of());
  }

  private static MetricsExposure otelAgent() throws OptionException {
    try {
      Class.forName(OTEL_AGENT_CLASS, false, ClassLoader.getSystemClassLoader());
    } catch (ClassNotFoundException e) {
      throw new OptionException(
          "--instrumentation otel: start the JVM with"
              + " -javaagent:<path>/opentelemetry-javaagent.jar (see README)");
    }
    return new MetricsExposure(Optional.empty(), List.of());
  }
}
