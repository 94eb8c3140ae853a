package dev.heapherd.metrics;

import static org.assertj.core.api.Assertions.assertThat;
import static org.awaitility.Awaitility.await;

import dev.heapherd.engine.GcModel;
import dev.heapherd.engine.PublishedRule;
import dev.heapherd.harness.PrometheusServer;
import dev.heapherd.input.Snapshot;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

/**
 * Why GC time is split: a real JVM whose GC time is nearly all young collections must get a small
 * heap-dependent constant, or the allocator would give it memory that buys nothing.
 */
class GcSplitIT {

  private static final String NAMESPACE = "split";
  private static final long WINDOW_SECONDS = 30;

  /** Share of GC time that is young collections for the churning workload, at least. */
  private static final double YOUNG_SHARE = 0.8;

  /** The churner's k is at most this fraction of the hoarder's. */
  private static final double K_RATIO = 0.1;

  @Test
  void aWorkloadDominatedByYoungCollectionsGetsASmallConstant() throws Exception {
    Path dir = Files.createTempDirectory("split");
    try (PrometheusServer prometheus = PrometheusServer.start(dir);
        // Much short-lived garbage, almost nothing promoted.
        WorkloadProcess churner =
            WorkloadProcess.start(
                new WorkloadProcess.Spec("micrometer", "-XX:+UseParallelGC", 256, 32, 0.05, 150),
                dir,
                "churner");
        // Little garbage, steady promotion into a tight old generation.
        WorkloadProcess hoarder =
            WorkloadProcess.start(
                new WorkloadProcess.Spec("micrometer", "-XX:+UseParallelGC", 128, 56, 2, 8),
                dir,
                "hoarder")) {
      prometheus.setTargets(
          List.of(
              target(churner, "churner-7d9f8c6b5-x2x7q"),
              target(hoarder, "hoarder-5c8d7b9f4-mm2zp")));
      PrometheusClient client = PrometheusClient.connect(PrometheusEndpoint.of(prometheus.uri()));
      String query =
          "count_over_time(up{namespace=\""
              + NAMESPACE
              + "\"}["
              + WINDOW_SECONDS
              + "s]) >= "
              + WINDOW_SECONDS;
      await()
          .atMost(Duration.ofSeconds(4 * WINDOW_SECONDS))
          .pollInterval(Duration.ofMillis(500))
          .until(() -> client.query(query, Instant.now()).samples().size() == 2);

      Snapshot snapshot =
          new SnapshotBuilder(new FleetReader(client, QueryProfiles.MICROMETER))
              .build(NAMESPACE, WINDOW_SECONDS, Instant.now(), List.of());
      assertThat(snapshot.held()).isEmpty();
      Snapshot.Workload churn = find(snapshot, "churner");
      Snapshot.Workload hoard = find(snapshot, "hoarder");

      assertThat(churn.youngGcSecondsPerSecond() / churn.gcSecondsPerSecond())
          .isGreaterThan(YOUNG_SHARE);
      double churnK = k(churn, churn.youngGcSecondsPerSecond());
      double hoardK = k(hoard, hoard.youngGcSecondsPerSecond());
      double churnKFromTotal = k(churn, 0);
      assertThat(churnK).isLessThan(K_RATIO * hoardK);
      // Calibrated on total GC time, the churner would have looked hungry for memory.
      assertThat(churnKFromTotal).isGreaterThan(churnK / (1 - YOUNG_SHARE));
    }
  }

  private static double k(Snapshot.Workload w, double heapIndependent) {
    GcModel model =
        PublishedRule.estimate(
            w.gcSecondsPerSecond(),
            heapIndependent,
            w.heapMaxBytes(),
            w.liveBytes(),
            w.offsetBytes(),
            w.promotionBytesPerSecond(),
            w.collectorBytesPerSecond());
    return model.constantBytes();
  }

  private static Snapshot.Workload find(Snapshot snapshot, String name) {
    return snapshot.workloads().stream()
        .filter(w -> w.name().equals(name))
        .findFirst()
        .orElseThrow();
  }

  private static PrometheusServer.Target target(WorkloadProcess jvm, String pod) {
    return new PrometheusServer.Target(
        jvm.metricsHostPort(), Map.of("namespace", NAMESPACE, "pod", pod));
  }
}
