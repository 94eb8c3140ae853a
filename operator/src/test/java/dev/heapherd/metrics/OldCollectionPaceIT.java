package dev.heapherd.metrics;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;
import static org.awaitility.Awaitility.await;

import com.fasterxml.jackson.databind.JsonNode;
import dev.heapherd.harness.PrometheusServer;
import dev.heapherd.input.Snapshot;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

/**
 * Old-generation GC time from its pace, on a real Parallel JVM scraped by the real Prometheus: each
 * short window's figure agrees with the JVM's own GarbageCollectorMXBean time over all the windows
 * together, where a count of one or two collections per window could not.
 */
class OldCollectionPaceIT {

  private static final String NAMESPACE = "pace";
  private static final String POD = "ledger-6b7c9d8f5-q4wzt";

  /** Each window holds two or three old collections of this workload: the case pacing is for. */
  private static final long WINDOW_SECONDS = 30;

  private static final int WINDOWS = 3;

  /**
   * Each window's paced figure is within this fraction of the long-run truth: the truth counts
   * about ten collections (one more or less is a tenth), and an old collection under Parallel can
   * come a little before the room is full (its ergonomics pad the expected promotion). Our bound.
   */
  private static final double TOLERANCE = 0.35;

  /** Parallel's old-generation collector, as HotSpot names its GarbageCollectorMXBean. */
  private static final String PARALLEL_OLD = "PS MarkSweep";

  @Test
  void eachShortWindowReadsTheLongRunOldGenerationTime() throws Exception {
    Path dir = Files.createTempDirectory("pace");
    // -Xms equal to -Xmx fixes the old generation's size, so the room stays put between windows.
    try (PrometheusServer prometheus = PrometheusServer.start(dir);
        WorkloadProcess jvm =
            WorkloadProcess.start(
                new WorkloadProcess.Spec("micrometer", "-XX:+UseParallelGC", 256, 64, 8, 16),
                dir,
                "ledger",
                "-Xms256m")) {
      prometheus.setTargets(
          List.of(
              new PrometheusServer.Target(
                  jvm.metricsHostPort(), Map.of("namespace", NAMESPACE, "pod", POD))));
      PrometheusClient client = PrometheusClient.connect(PrometheusEndpoint.of(prometheus.uri()));
      String fullWindow =
          "count_over_time(up{namespace=\""
              + NAMESPACE
              + "\"}["
              + WINDOW_SECONDS
              + "s]) >= "
              + WINDOW_SECONDS;
      await()
          .atMost(Duration.ofSeconds(4 * WINDOW_SECONDS))
          .pollInterval(Duration.ofMillis(500))
          .until(() -> client.query(fullWindow, Instant.now()).samples().size() == 1);
      SnapshotBuilder builder =
          new SnapshotBuilder(new FleetReader(client, QueryProfiles.MICROMETER));

      JsonNode first = jvm.truth();
      Instant from = Instant.now();
      List<Snapshot.Workload> windows = new ArrayList<>();
      for (int i = 1; i <= WINDOWS; i++) {
        Instant end = from.plusSeconds(i * WINDOW_SECONDS);
        await()
            .atMost(Duration.ofSeconds(2 * WINDOW_SECONDS))
            .pollInterval(Duration.ofMillis(200))
            .until(() -> Instant.now().isAfter(end));
        Snapshot snapshot = builder.build(NAMESPACE, WINDOW_SECONDS, end, List.of());
        assertThat(snapshot.held()).isEmpty();
        windows.add(snapshot.workloads().get(0));
      }
      JsonNode last = jvm.truth();

      double seconds =
          (last.path("uptimeMillis").asLong() - first.path("uptimeMillis").asLong()) / 1000.0;
      double truth = (oldMillis(last) - oldMillis(first)) / 1000.0 / seconds;
      assertThat(oldCount(last) - oldCount(first))
          .as("old collections over the windows")
          .isGreaterThanOrEqualTo(WINDOWS * 2L);
      for (Snapshot.Workload w : windows) {
        assertThat(w.evidence().notes()).anyMatch(n -> n.contains("from its pace"));
        double old = w.gcSecondsPerSecond() - w.youngGcSecondsPerSecond();
        assertThat(old)
            .as("paced old GC s/s; truth %.4f", truth)
            .isCloseTo(truth, within(truth * TOLERANCE));
      }
    }
  }

  private static double oldMillis(JsonNode truth) {
    return truth.path("collectors").path(PARALLEL_OLD).path("collectionTimeMillis").asDouble();
  }

  private static long oldCount(JsonNode truth) {
    return truth.path("collectors").path(PARALLEL_OLD).path("collectionCount").asLong();
  }
}
