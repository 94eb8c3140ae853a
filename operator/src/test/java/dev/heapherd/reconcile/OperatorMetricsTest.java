package dev.heapherd.reconcile;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.time.Duration;
import org.junit.jupiter.api.Test;

/** heapherd's own meters: names, tags, units and values. */
class OperatorMetricsTest {

  private final SimpleMeterRegistry registry = new SimpleMeterRegistry();
  private final OperatorMetrics metrics = bound(registry);

  @Test
  void heapsArePerWorkloadGaugesInBytes() {
    metrics.heap("larkspur", "orders", "price-engine", 512L << 20, 900L << 20);
    metrics.heap("larkspur", "orders", "price-engine", 600L << 20, 900L << 20);

    var current =
        registry.get("heapherd.workload.heap.current").tag("workload", "price-engine").gauge();
    assertThat(current.value()).isEqualTo(600L << 20);
    assertThat(current.getId().getBaseUnit()).isEqualTo("bytes");
    assertThat(current.getId().getDescription()).isNotBlank();
    assertThat(current.getId().getTag("pool")).isEqualTo("orders");
    assertThat(current.getId().getTag("namespace")).isEqualTo("larkspur");
    assertThat(
            registry
                .get("heapherd.workload.heap.proposed")
                .tag("workload", "price-engine")
                .gauge()
                .value())
        .isEqualTo(900L << 20);
  }

  @Test
  void predictedGcIsInSecondsPerHour() {
    metrics.predictedGc("larkspur", "orders", 120.5, 80.25);

    var now = registry.get("heapherd.pool.gc.predicted.current").gauge();
    assertThat(now.value()).isEqualTo(120.5);
    assertThat(now.getId().getBaseUnit()).isEqualTo("seconds");
    assertThat(registry.get("heapherd.pool.gc.predicted.proposed").gauge().value())
        .isEqualTo(80.25);
  }

  @Test
  void stepsRailsAndReconcilesAreCounted() {
    metrics.step("larkspur", "orders", "started");
    metrics.step("larkspur", "orders", "started");
    metrics.step("larkspur", "orders", "rolledBack");
    metrics.railTripped("larkspur", "orders", "Budget");
    metrics.reconciled("larkspur", "orders", Duration.ofMillis(40));

    assertThat(registry.get("heapherd.rollout.steps").tag("step", "started").counter().count())
        .isEqualTo(2);
    assertThat(registry.get("heapherd.rollout.steps").tag("step", "rolledBack").counter().count())
        .isEqualTo(1);
    assertThat(registry.get("heapherd.rails.tripped").tag("rail", "Budget").counter().count())
        .isEqualTo(1);
    var timer = registry.get("heapherd.reconcile.duration").timer();
    assertThat(timer.count()).isEqualTo(1);
    assertThat(timer.totalTime(java.util.concurrent.TimeUnit.MILLISECONDS)).isEqualTo(40);
  }

  @Test
  void theSeriesOfADeletedPoolAndOfAWorkloadThatLeftGoAway() {
    metrics.heap("larkspur", "orders", "price-engine", 512L << 20, 900L << 20);
    metrics.heap("larkspur", "orders", "stock-ledger", 1024L << 20, 700L << 20);
    metrics.predictedGc("larkspur", "orders", 120.5, 80.25);
    metrics.reconciled("larkspur", "returns", Duration.ofMillis(40));
    metrics.predictedGc("larkspur", "returns", 10, 8);

    metrics.retain(
        java.util.Set.of("larkspur/orders"),
        java.util.Map.of("larkspur/orders", java.util.Set.of("price-engine")));

    assertThat(registry.find("heapherd.workload.heap.current").tag("pool", "orders").gauges())
        .extracting(g -> g.getId().getTag("workload"))
        .containsExactly("price-engine");
    assertThat(registry.find("heapherd.pool.gc.predicted.current").tag("pool", "orders").gauge())
        .isNotNull();
    assertThat(registry.find("heapherd.reconcile.duration").tag("pool", "returns").timer())
        .isNull();
    assertThat(registry.find("heapherd.pool.gc.predicted.current").tag("pool", "returns").gauge())
        .isNull();
    // A workload that comes back is measured again, not stuck on a removed gauge.
    metrics.heap("larkspur", "orders", "stock-ledger", 800L << 20, 700L << 20);
    assertThat(
            registry
                .get("heapherd.workload.heap.current")
                .tag("workload", "stock-ledger")
                .gauge()
                .value())
        .isEqualTo(800L << 20);
  }

  @Test
  void everySeriesTheOperatingGuideListsIsServedUnderThatName() throws Exception {
    var prometheus =
        new io.micrometer.prometheusmetrics.PrometheusMeterRegistry(
            io.micrometer.prometheusmetrics.PrometheusConfig.DEFAULT);
    OperatorMetrics served = bound(prometheus);
    served.heap("larkspur", "orders", "price-engine", 512L << 20, 900L << 20);
    served.predictedGc("larkspur", "orders", 120.5, 80.25);
    served.checkedGc("larkspur", "orders", "price-engine", 30, 28);
    served.step("larkspur", "orders", "started");
    served.railTripped("larkspur", "orders", "Budget");
    served.reconciled("larkspur", "orders", Duration.ofMillis(40));
    io.fabric8.kubernetes.client.http.HttpClient.Builder http =
        new io.fabric8.kubernetes.client.jdkhttp.JdkHttpClientFactory().newBuilder();
    new ApiRequestCounter(prometheus)
        .before(
            null,
            http.build().newHttpRequestBuilder().uri("https://127.0.0.1:6443/api/v1/pods").build(),
            null);
    String scrape = prometheus.scrape();

    String guide =
        java.nio.file.Files.readString(java.nio.file.Path.of("..", "docs", "operating.md"));
    var names = java.util.regex.Pattern.compile("`(heapherd_[a-z_]+)`").matcher(guide);
    int listed = 0;
    while (names.find()) {
      listed++;
      String name = names.group(1);
      // A timer is served as its _count, _sum and _max series.
      assertThat(scrape.contains(name + "{") || scrape.contains(name + "_count{"))
          .as("series %s in %s", name, scrape)
          .isTrue();
    }
    assertThat(listed).isGreaterThanOrEqualTo(9);
  }

  @Test
  void metersUsedBeforeBindingFailLoudly() {
    assertThatThrownBy(() -> new OperatorMetrics().step("larkspur", "orders", "started"))
        .isInstanceOf(IllegalStateException.class)
        .hasMessageContaining("bindTo");
  }

  private static OperatorMetrics bound(MeterRegistry registry) {
    OperatorMetrics metrics = new OperatorMetrics();
    metrics.bindTo(registry);
    return metrics;
  }
}
