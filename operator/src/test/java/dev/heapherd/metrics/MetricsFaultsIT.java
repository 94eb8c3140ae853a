package dev.heapherd.metrics;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;
import static org.awaitility.Awaitility.await;

import dev.heapherd.harness.PrometheusServer;
import dev.heapherd.input.Snapshot;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import java.util.stream.Collectors;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The real Prometheus scraping exporters whose values the test controls: exact rates come back as
 * estimates, and every kind of bad data holds its workload with a reason instead of throwing.
 */
class MetricsFaultsIT {

  private static final String NAMESPACE = "faults";

  /** Window of the test: twenty one-second scrapes. */
  private static final long WINDOW_SECONDS = 20;

  /** Live growth of the "growing" pod: its live figure doubles within the window. */
  private static final double GROWTH_BYTES_PER_SECOND = 20e6;

  private static final FakeExporter.Values HEALTHY =
      new FakeExporter.Values(300e6, 1024e6, 80e6, 0.004, 0.012, 2e6, 50e6);

  @Test
  void badDataHoldsWorkloadsAndGoodDataComesBackExactly(@TempDir Path dir) throws Exception {
    try (PrometheusServer prometheus = PrometheusServer.start(dir);
        FakeExporter healthy = FakeExporter.start(HEALTHY);
        FakeExporter nan =
            FakeExporter.start(
                new FakeExporter.Values(Double.NaN, 1024e6, 80e6, 0.004, 0.012, 2e6, 50e6));
        FakeExporter restarted = FakeExporter.start(HEALTHY);
        FakeExporter vanishing = FakeExporter.start(HEALTHY);
        FakeExporter growing = FakeExporter.start(HEALTHY)) {
      growing.growLive(GROWTH_BYTES_PER_SECOND);
      var all =
          List.of(
              target(healthy, "healthy-7d9f8c6b5-x2x7q"),
              target(nan, "nan-7d9f8c6b5-q4w8z"),
              target(restarted, "restarted-0"),
              target(vanishing, "vanishing-5c8d7b9f4-mm2zp"),
              target(growing, "growing-0"));
      PrometheusClient client = PrometheusClient.connect(PrometheusEndpoint.of(prometheus.uri()));
      prometheus.setTargets(all);
      awaitSamples(client, "vanishing-5c8d7b9f4-mm2zp", 4);
      prometheus.setTargets(List.of(all.get(0), all.get(1), all.get(2), all.get(4)));
      awaitSamples(client, "restarted-0", WINDOW_SECONDS / 2);
      restarted.restart();
      awaitSamples(client, "healthy-7d9f8c6b5-x2x7q", WINDOW_SECONDS);

      SnapshotBuilder builder =
          new SnapshotBuilder(new FleetReader(client, QueryProfiles.MICROMETER));
      List<String> expected =
          List.of("healthy", "nan", "restarted", "vanishing", "growing", "ghost");
      Snapshot snapshot = builder.build(NAMESPACE, WINDOW_SECONDS, Instant.now(), expected);

      assertThat(snapshot.workloads())
          .extracting(Snapshot.Workload::name)
          .containsExactly("healthy");
      Snapshot.Workload w = snapshot.workloads().get(0);
      assertThat(w.kind()).isEqualTo("Deployment");
      assertThat(w.collector()).isEqualTo("G1");
      assertThat(w.replicas()).isEqualTo(1);
      assertThat((double) w.liveBytes()).isCloseTo(HEALTHY.liveBytes(), within(1.0));
      assertThat((double) w.heapMaxBytes()).isCloseTo(HEALTHY.heapMaxBytes(), within(1.0));
      assertThat((double) w.nonHeapBytes()).isCloseTo(HEALTHY.nonHeapBytes(), within(1.0));
      // rate() extrapolates to the window's edges; a tenth covers that at one-second scrapes.
      assertThat(w.youngGcSecondsPerSecond())
          .isCloseTo(
              HEALTHY.youngGcSecondsPerSecond(), within(HEALTHY.youngGcSecondsPerSecond() / 10));
      assertThat(w.gcSecondsPerSecond())
          .isCloseTo(
              HEALTHY.youngGcSecondsPerSecond() + HEALTHY.oldGcSecondsPerSecond(),
              within((HEALTHY.youngGcSecondsPerSecond() + HEALTHY.oldGcSecondsPerSecond()) / 10));
      assertThat(w.promotionBytesPerSecond().getAsDouble())
          .isCloseTo(
              HEALTHY.promotionBytesPerSecond(), within(HEALTHY.promotionBytesPerSecond() / 10));

      Map<String, String> held =
          snapshot.held().stream()
              .collect(Collectors.toMap(Snapshot.Held::name, Snapshot.Held::reason));
      assertThat(held.get("nan")).contains("NaN");
      assertThat(held.get("restarted")).contains("restarted");
      assertThat(held.get("vanishing")).contains("samples");
      assertThat(held.get("ghost")).contains("no pod");
      assertThat(held.get("growing")).contains("warming up or leaking");

      // The same pods grouped by a label instead of by name.
      Snapshot byLabel =
          new SnapshotBuilder(new FleetReader(client, QueryProfiles.MICROMETER), "app")
              .build(NAMESPACE, WINDOW_SECONDS, Instant.now(), List.of());
      assertThat(byLabel.workloads())
          .extracting(Snapshot.Workload::name)
          .containsExactly("storefront");

      prometheus.stop();
      Snapshot down = builder.build(NAMESPACE, WINDOW_SECONDS, Instant.now(), expected);
      assertThat(down.workloads()).isEmpty();
      assertThat(down.held())
          .extracting(Snapshot.Held::name)
          .containsExactlyInAnyOrderElementsOf(expected);
      assertThat(down.held()).allMatch(h -> h.reason().contains("cannot connect"));
    }
  }

  /** Waits until Prometheus holds {@code count} scrapes of {@code pod} within the window. */
  private static void awaitSamples(PrometheusClient client, String pod, long count) {
    String query = "count_over_time(up{pod=\"" + pod + "\"}[" + WINDOW_SECONDS + "s])";
    await()
        .atMost(Duration.ofSeconds(3 * WINDOW_SECONDS))
        .pollInterval(Duration.ofMillis(500))
        .until(
            () ->
                client.query(query, Instant.now()).samples().stream()
                    .anyMatch(s -> s.value() >= count));
  }

  private static PrometheusServer.Target target(FakeExporter exporter, String pod) {
    return new PrometheusServer.Target(
        exporter.hostPort(),
        Map.of(
            "namespace",
            NAMESPACE,
            "pod",
            pod,
            "app",
            pod.startsWith("healthy") ? "storefront" : "other"));
  }
}
