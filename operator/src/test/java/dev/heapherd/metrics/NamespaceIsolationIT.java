package dev.heapherd.metrics;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;
import static org.awaitility.Awaitility.await;

import dev.heapherd.harness.PrometheusServer;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.PoolFileReader;
import dev.heapherd.input.Snapshot;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import java.util.stream.Collectors;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Two namespaces scraped by one real Prometheus, each with a pod of the same name: a pool measures
 * its own namespace's pod only, and series a query rewrites into another namespace (as a
 * relabelling or honoured exporter labels can) are dropped and reported, never measured.
 */
class NamespaceIsolationIT {

  private static final String POOL_NAMESPACE = "tidewater-dispatch";
  private static final String OTHER_NAMESPACE = "harbor-billing";
  private static final String POD = "berth-planner-0";

  /** Twenty one-second scrapes, as in MetricsFaultsIT. */
  private static final long WINDOW_SECONDS = 20;

  private static final FakeExporter.Values OURS =
      new FakeExporter.Values(300e6, 1024e6, 80e6, 0.004, 0.012, 2e6, 50e6);

  /** The other namespace's pod: every figure different, so a mix-up shows in any of them. */
  private static final FakeExporter.Values THEIRS =
      new FakeExporter.Values(700e6, 2048e6, 120e6, 0.020, 0.030, 6e6, 90e6);

  @Test
  void aPoolMeasuresOnlyItsOwnNamespacesPodWhenAnotherHasTheSameName(@TempDir Path dir)
      throws Exception {
    try (PrometheusServer prometheus = PrometheusServer.start(dir);
        FakeExporter ours = FakeExporter.start(OURS);
        FakeExporter theirs = FakeExporter.start(THEIRS)) {
      PrometheusClient client = scrape(prometheus, ours, theirs);

      Snapshot snapshot =
          new SnapshotBuilder(new FleetReader(client, QueryProfiles.MICROMETER))
              .build(POOL_NAMESPACE, WINDOW_SECONDS, Instant.now(), List.of("berth-planner"));

      assertThat(snapshot.held()).isEmpty();
      assertThat(snapshot.workloads()).hasSize(1);
      Snapshot.Workload w = snapshot.workloads().get(0);
      assertThat(w.name()).isEqualTo("berth-planner");
      assertThat(w.replicas()).isEqualTo(1);
      assertThat((double) w.liveBytes()).isCloseTo(OURS.liveBytes(), within(1.0));
      assertThat((double) w.heapMaxBytes()).isCloseTo(OURS.heapMaxBytes(), within(1.0));
      assertThat((double) w.nonHeapBytes()).isCloseTo(OURS.nonHeapBytes(), within(1.0));
      // rate() extrapolates to the window's edges; a tenth covers that at one-second scrapes.
      double gc = OURS.youngGcSecondsPerSecond() + OURS.oldGcSecondsPerSecond();
      assertThat(w.gcSecondsPerSecond()).isCloseTo(gc, within(gc / 10));
    }
  }

  @Test
  void seriesRewrittenIntoAnotherNamespaceAreDroppedAndReported(@TempDir Path dir)
      throws Exception {
    // The live-size query of a pool file, scoped by ${selector} as the reader requires, whose
    // answer is relabelled into another namespace afterwards.
    Path poolPath =
        Files.writeString(
            dir.resolve("pool.yaml"),
            String.join(
                "\n",
                "apiVersion: heapherd.dev/v1alpha1",
                "kind: HeapPool",
                "metadata:",
                "  name: dispatch",
                "  namespace: " + POOL_NAMESPACE,
                "spec:",
                "  memoryBudget: 4Gi",
                "  selector:",
                "    matchLabels:",
                "      heapherd.dev/pool: dispatch",
                "  metrics:",
                "    queries:",
                "      - signal: liveBytes",
                "        promql: 'label_replace(max by (namespace, pod) (max_over_time("
                    + "jvm_gc_live_data_size_bytes{${selector}}[${window}])), \"namespace\", \""
                    + OTHER_NAMESPACE
                    + "\", \"\", \"\")'",
                ""));
    PoolFile pool = PoolFileReader.read(poolPath);
    QueryProfile queries =
        PoolMetrics.queries(pool.metrics().profile(), pool.metrics()).orElseThrow();
    try (PrometheusServer prometheus = PrometheusServer.start(dir);
        FakeExporter ours = FakeExporter.start(OURS);
        FakeExporter theirs = FakeExporter.start(THEIRS)) {
      PrometheusClient client = scrape(prometheus, ours, theirs);

      Snapshot snapshot =
          new SnapshotBuilder(new FleetReader(client, queries))
              .build(POOL_NAMESPACE, WINDOW_SECONDS, Instant.now(), List.of("berth-planner"));

      assertThat(snapshot.workloads()).isEmpty();
      Map<String, String> held =
          snapshot.held().stream()
              .collect(Collectors.toMap(Snapshot.Held::name, Snapshot.Held::reason, (a, b) -> a));
      assertThat(held.get(POD))
          .contains(
              "pod of namespace \""
                  + OTHER_NAMESPACE
                  + "\" answered a query for namespace \""
                  + POOL_NAMESPACE
                  + "\": dropped");
      // The pool's own pod lost its live size to the rewrite: held, not sized from a guess.
      assertThat(held).containsKey("berth-planner");
    }
  }

  /** Scrapes both pods under their namespaces until the window is full. */
  private static PrometheusClient scrape(
      PrometheusServer prometheus, FakeExporter ours, FakeExporter theirs) throws Exception {
    prometheus.setTargets(
        List.of(
            new PrometheusServer.Target(
                ours.hostPort(), Map.of("namespace", POOL_NAMESPACE, "pod", POD)),
            new PrometheusServer.Target(
                theirs.hostPort(), Map.of("namespace", OTHER_NAMESPACE, "pod", POD))));
    PrometheusClient client = PrometheusClient.connect(PrometheusEndpoint.of(prometheus.uri()));
    for (String namespace : List.of(POOL_NAMESPACE, OTHER_NAMESPACE)) {
      String query =
          "count_over_time(up{namespace=\""
              + namespace
              + "\",pod=\""
              + POD
              + "\"}["
              + WINDOW_SECONDS
              + "s])";
      await()
          .atMost(Duration.ofSeconds(3 * WINDOW_SECONDS))
          .pollInterval(Duration.ofMillis(500))
          .until(
              () ->
                  client.query(query, Instant.now()).samples().stream()
                      .anyMatch(s -> s.value() >= WINDOW_SECONDS));
    }
    return client;
  }
}
