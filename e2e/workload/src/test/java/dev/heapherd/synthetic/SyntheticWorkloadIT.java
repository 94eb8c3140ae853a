package dev.heapherd.synthetic;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;
import static org.awaitility.Awaitility.await;

import java.net.http.HttpResponse;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Runs the packaged jar as real {@code java} processes under every instrumentation and collector,
 * and checks the scraped metrics against the JDK's own totals from /truth.
 */
class SyntheticWorkloadIT {

  private static final long MIB = 1024L * 1024L;

  /** A small service: 64 MiB live in a 256 MiB heap leaves room for several young generations. */
  private static final int LIVE_MIB = 64;

  private static final String MAX_HEAP_FLAG = "-Xmx256m";

  /** Enough for the 8 MiB live set of the short runs that only check how the process ends. */
  private static final String SMALL_HEAP_FLAG = "-Xmx64m";

  /** Fast enough for several young collections within a couple of seconds on 2 cores. */
  private static final int GARBAGE_MIB_PER_SECOND = 64;

  /** Turns the live set over in eight seconds, so old-generation work shows within a test. */
  private static final int REPLACE_MIB_PER_SECOND = 8;

  /** The brief's tolerance for held versus configured live bytes. */
  private static final double HELD_TOLERANCE = 0.05;

  /** Achieved rates may trail by the backlog of a late tick; 10 percent leaves room for a pause. */
  private static final double RATE_TOLERANCE = 0.10;

  private static final Duration GC_PROGRESS_TIMEOUT = Duration.ofSeconds(30);
  private static final Duration POLL_INTERVAL = Duration.ofMillis(200);

  /** The exporter's own scrape path, where the agent serves its Prometheus metrics. */
  private static final String METRICS_PATH = "/metrics";

  private static final int HTTP_OK = 200;
  private static final int HTTP_NOT_FOUND = 404;

  /** A collector flag and the GarbageCollectorMXBean names it must produce on JDK 17. */
  record Collector(String flag, List<String> beanNames, boolean generational) {
    @Override
    public String toString() {
      return flag;
    }
  }

  private static final List<Collector> COLLECTORS =
      List.of(
          new Collector("-XX:+UseSerialGC", List.of("Copy", "MarkSweepCompact"), true),
          new Collector("-XX:+UseParallelGC", List.of("PS Scavenge", "PS MarkSweep"), true),
          new Collector("-XX:+UseG1GC", List.of("G1 Young Generation", "G1 Old Generation"), true),
          // JDK 17's ZGC is single-generation: one bean for cycles, one for pauses.
          new Collector("-XX:+UseZGC", List.of("ZGC Cycles", "ZGC Pauses"), false));

  static Stream<Arguments> everyInstrumentationUnderEveryCollector() {
    List<Arguments> cases = new ArrayList<>();
    for (Instrumentation instrumentation : Instrumentation.values()) {
      for (Collector collector : COLLECTORS) {
        cases.add(Arguments.of(instrumentation, collector));
      }
    }
    return cases.stream();
  }

  @ParameterizedTest(name = "{0} under {1}")
  @MethodSource("everyInstrumentationUnderEveryCollector")
  void servesGcMetricsAndHoldsTheConfiguredLiveSet(
      Instrumentation instrumentation, Collector collector, @TempDir Path workDir)
      throws Exception {
    List<String> jvmFlags = new ArrayList<>(List.of(MAX_HEAP_FLAG, collector.flag()));
    Map<String, String> environment = Map.of();
    int agentPort = -1;
    if (instrumentation == Instrumentation.OTEL) {
      agentPort = WorkloadProcess.freeLoopbackPort();
      jvmFlags.add("-javaagent:" + WorkloadProcess.otelAgentJar().toAbsolutePath());
      environment = otelEnvironment(agentPort);
    }
    List<String> args =
        List.of(
            "--port",
            "0",
            "--live-mib",
            Integer.toString(LIVE_MIB),
            "--replace-mib-per-second",
            Integer.toString(REPLACE_MIB_PER_SECOND),
            "--garbage-mib-per-second",
            Integer.toString(GARBAGE_MIB_PER_SECOND),
            "--instrumentation",
            instrumentation.optionValue());

    WorkloadProcess workload = WorkloadProcess.start(workDir, jvmFlags, args, environment);
    try {
      int port = workload.awaitReady();
      assertThat(workload.get(port, "/ready").statusCode()).isEqualTo(HTTP_OK);

      Truth first = workload.truth();
      assertThat(first.pid()).isEqualTo(workload.pid());
      assertThat(first.ready()).isTrue();
      assertThat(first.collectorNames()).containsExactlyInAnyOrderElementsOf(collector.beanNames());
      assertThat((double) first.heldBytes())
          .as("held bytes against configured live bytes")
          .isCloseTo(LIVE_MIB * MIB, within(LIVE_MIB * MIB * HELD_TOLERANCE));
      assertThat(first.configuredLiveBytes()).isEqualTo(LIVE_MIB * MIB);
      assertThat(first.maxHeapBytes()).isPositive();
      assertThat(first.residentSetBytes()).isGreaterThan(first.heldBytes());

      // GC keeps happening: the JDK's own collection count rises while we watch.
      await("GC count rising")
          .atMost(GC_PROGRESS_TIMEOUT)
          .pollInterval(POLL_INTERVAL)
          .until(() -> totalCollections(workload.truth()) > totalCollections(first));

      Truth before = workload.truth();
      String exposition;
      if (instrumentation == Instrumentation.OTEL) {
        assertThat(workload.get(port, METRICS_PATH).statusCode()).isEqualTo(HTTP_NOT_FOUND);
        exposition = awaitAgentMetrics(workload, agentPort);
      } else {
        HttpResponse<String> response = workload.get(port, METRICS_PATH);
        assertThat(response.statusCode()).isEqualTo(HTTP_OK);
        exposition = response.body();
      }
      Truth after = workload.truth();
      PrometheusText metrics = PrometheusText.parse(exposition);

      switch (instrumentation) {
        case MICROMETER -> assertMicrometer(metrics, collector, after);
        case CLIENT_JAVA -> assertClientJava(metrics, collector, before, after);
        case OTEL -> assertOtel(metrics, collector, after);
      }

      assertRatesHold(after);
      assertThat(after.heldBytes()).isEqualTo(first.heldBytes());
    } catch (AssertionError | RuntimeException e) {
      throw new AssertionError(e.getMessage() + "\nworkload " + workload, e);
    } finally {
      int exitCode = workload.stop();
      assertThat(workload.process().isAlive()).isFalse();
      assertThat(exitCode).isEqualTo(WorkloadProcess.EXIT_ON_SIGTERM);
    }
  }

  @Test
  void exitsZeroAfterItsDuration(@TempDir Path workDir) throws Exception {
    WorkloadProcess workload =
        WorkloadProcess.start(
            workDir,
            List.of(SMALL_HEAP_FLAG),
            List.of(),
            Map.of(
                "WORKLOAD_PORT", "0",
                "WORKLOAD_LIVE_MIB", "8",
                "WORKLOAD_DURATION_SECONDS", "2",
                "WORKLOAD_INSTRUMENTATION", "client-java"));
    try (workload) {
      workload.awaitReady();
      assertThat(
              workload
                  .process()
                  .waitFor(WorkloadProcess.STOP_TIMEOUT.toSeconds(), TimeUnit.SECONDS))
          .as("exited by itself")
          .isTrue();
      assertThat(workload.process().exitValue()).isZero();
    }
  }

  @Test
  void badOptionExitsTwoWithOneLine(@TempDir Path workDir) throws Exception {
    WorkloadProcess workload =
        WorkloadProcess.start(
            workDir, List.of(SMALL_HEAP_FLAG), List.of("--object-sizes", "64:2"), Map.of());
    try (workload) {
      assertThat(
              workload
                  .process()
                  .waitFor(WorkloadProcess.STOP_TIMEOUT.toSeconds(), TimeUnit.SECONDS))
          .isTrue();
      assertThat(workload.process().exitValue()).isEqualTo(SyntheticWorkload.EXIT_USAGE);
      assertThat(workload.stderr())
          .isEqualTo(
              "synthetic-workload: --object-sizes: fraction 2 must be above 0 and at most 1"
                  + System.lineSeparator());
    }
  }

  /**
   * The agent's Prometheus exporter plus only its runtime metrics: turning the other
   * instrumentations off halves the agent's startup on 2 cores and changes no JVM metric.
   */
  static Map<String, String> otelEnvironment(int agentPort) {
    return Map.of(
        "OTEL_METRICS_EXPORTER", "prometheus",
        "OTEL_EXPORTER_PROMETHEUS_HOST", "127.0.0.1",
        "OTEL_EXPORTER_PROMETHEUS_PORT", Integer.toString(agentPort),
        "OTEL_TRACES_EXPORTER", "none",
        "OTEL_LOGS_EXPORTER", "none",
        "OTEL_SERVICE_NAME", "synthetic-workload",
        "OTEL_INSTRUMENTATION_COMMON_DEFAULT_ENABLED", "false",
        "OTEL_INSTRUMENTATION_RUNTIME_TELEMETRY_ENABLED", "true",
        "OTEL_INSTRUMENTATION_RUNTIME_TELEMETRY_EMIT_EXPERIMENTAL_METRICS", "true");
  }

  private static String awaitAgentMetrics(WorkloadProcess workload, int agentPort) {
    // The exporter starts with the agent, but the GC histogram appears only after a collection
    // the agent observed.
    return await("agent metrics with GC durations")
        .atMost(GC_PROGRESS_TIMEOUT)
        .pollInterval(POLL_INTERVAL)
        .ignoreExceptions()
        .until(
            () -> workload.get(agentPort, METRICS_PATH),
            response ->
                response.statusCode() == HTTP_OK
                    && response.body().contains("jvm_gc_duration_seconds_count"))
        .body();
  }

  private static void assertMicrometer(PrometheusText metrics, Collector collector, Truth truth) {
    // GC pause time, split minor/major by the action label, per collector bean in the gc label.
    assertThat(metrics.labelValues("jvm_gc_pause_seconds_count", "gc"))
        .isNotEmpty()
        .isSubsetOf(collector.beanNames());
    assertThat(metrics.named("jvm_gc_pause_seconds_count"))
        .allSatisfy(s -> assertThat(s.labels()).containsKeys("action", "cause", "gc"));
    assertThat(metrics.named("jvm_gc_pause_seconds_sum")).isNotEmpty();
    assertCountsWithinTruth(metrics, "jvm_gc_pause_seconds_count", "gc", truth);
    // Allocation and promotion counters, and the live data gauges.
    assertThat(single(metrics, "jvm_gc_memory_allocated_bytes_total")).isPositive();
    if (collector.generational()) {
      assertThat(single(metrics, "jvm_gc_memory_promoted_bytes_total")).isPositive();
    }
    assertThat(metrics.named("jvm_gc_live_data_size_bytes")).hasSize(1);
    assertThat(metrics.named("jvm_gc_max_data_size_bytes")).hasSize(1);
    assertThat(metrics.named("jvm_memory_usage_after_gc")).isNotEmpty();
    // Per-pool heap and non-heap memory.
    assertThat(metrics.labelValues("jvm_memory_used_bytes", "area"))
        .containsExactlyInAnyOrder("heap", "nonheap");
    assertThat(metrics.labelValues("jvm_memory_used_bytes", "id"))
        .containsAll(truth.heapPools().keySet())
        .contains("Metaspace");
    assertThat(metrics.labelValues("jvm_memory_committed_bytes", "area")).contains("nonheap");
    assertThat(metrics.named("process_cpu_usage")).hasSize(1);
  }

  private static void assertClientJava(
      PrometheusText metrics, Collector collector, Truth before, Truth after) {
    // GC time per collector bean; no minor/major label: the bean name says which.
    assertThat(metrics.labelValues("jvm_gc_collection_seconds_count", "gc"))
        .containsExactlyInAnyOrderElementsOf(collector.beanNames());
    assertThat(metrics.named("jvm_gc_collection_seconds_sum"))
        .hasSize(collector.beanNames().size());
    // Read from the same beans as /truth, so the scraped count lies between two readings.
    for (PrometheusText.Sample sample : metrics.named("jvm_gc_collection_seconds_count")) {
      String gc = sample.labels().get("gc");
      assertThat((long) sample.value())
          .as("collections of %s", gc)
          .isBetween(
              before.collectors().get(gc).collectionCount(),
              after.collectors().get(gc).collectionCount());
    }
    // Per-pool use after the last collection, and bytes allocated into each pool.
    assertThat(metrics.labelValues("jvm_memory_pool_collection_used_bytes", "pool"))
        .containsExactlyInAnyOrderElementsOf(after.heapPools().keySet());
    // A pool's allocation counter appears only after a collection in which that pool grew.
    assertThat(metrics.labelValues("jvm_memory_pool_allocated_bytes_total", "pool"))
        .containsAnyElementsOf(after.heapPools().keySet());
    assertThat(metrics.labelValues("jvm_memory_used_bytes", "area"))
        .containsExactlyInAnyOrder("heap", "nonheap");
    assertThat(metrics.labelValues("jvm_memory_pool_used_bytes", "pool")).contains("Metaspace");
    assertThat(single(metrics, "process_resident_memory_bytes")).isPositive();
  }

  private static void assertOtel(PrometheusText metrics, Collector collector, Truth truth) {
    // GC duration histogram, split by jvm_gc_action (minor/major) and jvm_gc_name (bean).
    assertThat(metrics.labelValues("jvm_gc_duration_seconds_count", "jvm_gc_name"))
        .isNotEmpty()
        .isSubsetOf(collector.beanNames());
    assertThat(metrics.named("jvm_gc_duration_seconds_count"))
        .allSatisfy(s -> assertThat(s.labels()).containsKeys("jvm_gc_action", "jvm_gc_name"));
    assertThat(metrics.named("jvm_gc_duration_seconds_bucket")).isNotEmpty();
    assertCountsWithinTruth(metrics, "jvm_gc_duration_seconds_count", "jvm_gc_name", truth);
    // Per-pool use after the last collection, heap and non-heap use, direct buffers.
    assertThat(metrics.labelValues("jvm_memory_used_after_last_gc_bytes", "jvm_memory_pool_name"))
        .containsExactlyInAnyOrderElementsOf(truth.heapPools().keySet());
    assertThat(metrics.labelValues("jvm_memory_used_bytes", "jvm_memory_type"))
        .containsExactlyInAnyOrder("heap", "non_heap");
    assertThat(metrics.labelValues("jvm_memory_used_bytes", "jvm_memory_pool_name"))
        .contains("Metaspace");
    assertThat(metrics.named("jvm_memory_committed_bytes")).isNotEmpty();
    assertThat(metrics.named("jvm_buffer_memory_used_bytes")).isNotEmpty();
  }

  /**
   * Counts from GC notifications start when the library registers, after the JVM started, so they
   * can only be at most the JDK's totals read after the scrape.
   */
  private static void assertCountsWithinTruth(
      PrometheusText metrics, String countName, String collectorLabel, Truth after) {
    Map<String, Double> countsByCollector = new HashMap<>();
    for (PrometheusText.Sample sample : metrics.named(countName)) {
      countsByCollector.merge(sample.labels().get(collectorLabel), sample.value(), Double::sum);
    }
    countsByCollector.forEach(
        (gc, count) ->
            assertThat(count.longValue())
                .as("notified collections of %s", gc)
                .isPositive()
                .isLessThanOrEqualTo(after.collectors().get(gc).collectionCount()));
  }

  private static void assertRatesHold(Truth truth) {
    double seconds = truth.allocatingSeconds();
    assertThat(truth.garbageBytesTotal() / seconds)
        .as("achieved garbage rate")
        .isCloseTo(
            truth.configuredGarbageBytesPerSecond(),
            within(truth.configuredGarbageBytesPerSecond() * RATE_TOLERANCE));
    assertThat(truth.replacedBytesTotal() / seconds)
        .as("achieved replacement rate")
        .isCloseTo(
            truth.configuredReplaceBytesPerSecond(),
            within(truth.configuredReplaceBytesPerSecond() * RATE_TOLERANCE));
  }

  private static long totalCollections(Truth truth) {
    return truth.collectors().values().stream()
        .mapToLong(Truth.CollectorTotals::collectionCount)
        .sum();
  }

  private static double single(PrometheusText metrics, String name) {
    List<PrometheusText.Sample> samples = metrics.named(name);
    assertThat(samples).as(name).hasSize(1);
    return samples.get(0).value();
  }
}
