package dev.heapherd.metrics;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;
import static org.awaitility.Awaitility.await;

import dev.heapherd.harness.PrometheusServer;
import dev.heapherd.input.Snapshot;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.CopyOnWriteArrayList;
import java.util.concurrent.Executors;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.TimeUnit;
import java.util.stream.Stream;
import org.assertj.core.api.SoftAssertions;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Three real workload JVMs with different live sizes and rates, scraped every second by the real
 * Prometheus, under each of the three instrumentations. The estimates are checked against what each
 * workload holds and replaces, and GC time against the JDK's own GarbageCollectorMXBean totals read
 * from the workload.
 */
class FleetMetricsIT {

  private static final String NAMESPACE = "fleet";

  /** Thirty one-second scrapes: a test-sized window (production windows are an hour). */
  private static final long WINDOW_SECONDS = 30;

  /** Our target for one pool's measurement: a few queries at any pool size (docs/metrics.md). */
  private static final long MAX_QUERIES_PER_POOL = 10;

  /** Scrapes before the window, so promotion has reached its steady rate. */
  private static final long WARM_UP_SECONDS = 15;

  /** Live bytes within 15 percent of what the workload holds (the bound). */
  private static final double LIVE_TOLERANCE = 0.15;

  /** Promotion within 25 percent of the rate the workload replaces live objects at. */
  private static final double PROMOTION_TOLERANCE = 0.25;

  /**
   * GC time within 25 percent of the MXBean totals over the same span: rate() extrapolates to the
   * window's edges and the two spans differ by up to a scrape.
   */
  private static final double GC_TOLERANCE = 0.25;

  /**
   * A collection at either edge of the window may fall in one span and not the other: two pauses of
   * at most 25 ms each at these heap sizes (the workloads' GC logs show 5 to 20 ms).
   */
  private static final double EDGE_PAUSE_SECONDS = 0.05;

  private static final Map<String, long[]> FLEET = new LinkedHashMap<>();

  static {
    // pod name -> {max heap MiB, live MiB, replace MiB/s x 10, garbage MiB/s}. Replaced objects
    // live (live / replace) seconds, longer than it takes to reach the tenuring age at these
    // garbage rates, so they are promoted by young collections; live stays near half the old
    // generation, so the collector need not fall back to full collections to promote, and old
    // collections come every 15 to 20 seconds, so the window sees at least one.
    FLEET.put("ledger-7d9f8c6b5-x2x7q", new long[] {224, 80, 40, 64});
    FLEET.put("quotes-5c8d7b9f4-mm2zp", new long[] {128, 40, 30, 64});
    FLEET.put("relay-0", new long[] {128, 48, 20, 48});
  }

  /**
   * G1 keeps some garbage in the old generation after its mixed collections: regions more than 85
   * percent live are not collected and up to 5 percent of the heap may stay as waste (the
   * documented JDK defaults of G1MixedGCLiveThresholdPercent and G1HeapWastePercent). Occupancy
   * based live estimates therefore read high by up to that much, never low.
   */
  private static final double G1_LIVE_THRESHOLD = 0.85;

  private static final double G1_HEAP_WASTE = 0.05;

  static Stream<Arguments> runs() {
    return Stream.of(
        Arguments.of("micrometer", "-XX:+UseParallelGC"),
        Arguments.of("client-java", "-XX:+UseParallelGC"),
        Arguments.of("otel", "-XX:+UseParallelGC"),
        Arguments.of("micrometer", "-XX:+UseG1GC"));
  }

  @ParameterizedTest(name = "{0} {1}")
  @MethodSource("runs")
  void estimatesMatchWhatTheJvmsHoldAndTheJdkReports(String instrumentation, String collector)
      throws Exception {
    Path dir = Files.createTempDirectory("fleet-" + instrumentation);
    List<WorkloadProcess> jvms = new ArrayList<>();
    try (PrometheusServer prometheus = PrometheusServer.start(dir)) {
      List<PrometheusServer.Target> targets = new ArrayList<>();
      for (var entry : FLEET.entrySet()) {
        long[] p = entry.getValue();
        WorkloadProcess jvm =
            WorkloadProcess.start(
                new WorkloadProcess.Spec(instrumentation, collector, p[0], p[1], p[2] / 10.0, p[3]),
                dir,
                entry.getKey());
        jvms.add(jvm);
        targets.add(
            new PrometheusServer.Target(
                jvm.metricsHostPort(), Map.of("namespace", NAMESPACE, "pod", entry.getKey())));
      }
      prometheus.setTargets(targets);
      PrometheusClient client = PrometheusClient.connect(PrometheusEndpoint.of(prometheus.uri()));
      awaitScrapes(client, 1);
      // The JDK's GC totals, read every half second, so the span matching the window is known.
      List<GcReading> readings = new CopyOnWriteArrayList<>();
      ScheduledExecutorService sampler = Executors.newSingleThreadScheduledExecutor();
      sampler.scheduleAtFixedRate(
          () -> readings.add(GcReading.of(jvms)), 0, GC_READING_MILLIS, TimeUnit.MILLISECONDS);
      Snapshot snapshot;
      Instant end;
      try {
        // Promotion starts only once the first replaced objects reach the tenuring age.
        awaitScrapes(client, WARM_UP_SECONDS + WINDOW_SECONDS);
        end = Instant.now();
        QueryProfile profile = QueryProfiles.named(instrumentation).orElseThrow();
        long queriesBefore = queriesServed(prometheus);
        snapshot =
            new SnapshotBuilder(new FleetReader(client, profile))
                .build(NAMESPACE, WINDOW_SECONDS, end, List.of());
        // Counted by Prometheus itself: a pool is measured in a few queries, whatever its size.
        assertThat(queriesServed(prometheus) - queriesBefore)
            .as("queries Prometheus served for one pool")
            .isBetween(1L, MAX_QUERIES_PER_POOL);
      } finally {
        sampler.shutdownNow();
      }
      GcReading first = GcReading.nearest(readings, end.minusSeconds(WINDOW_SECONDS));
      GcReading last = GcReading.nearest(readings, end);
      double spanSeconds = Duration.between(first.at(), last.at()).toMillis() / 1000.0;

      assertThat(snapshot.held()).as("held workloads").isEmpty();
      boolean g1 = collector.contains("G1");
      SoftAssertions soft = new SoftAssertions();
      int i = 0;
      for (var entry : FLEET.entrySet()) {
        WorkloadProcess jvm = jvms.get(i);
        String name = PodOwners.of(entry.getKey()).orElseThrow().name();
        Snapshot.Workload w =
            snapshot.workloads().stream()
                .filter(x -> x.name().equals(name))
                .findFirst()
                .orElseThrow();
        var truth = jvm.truth();
        // What the JVM keeps alive: the workload's live set plus its runtime's and library's own.
        double held =
            truth.path("heldBytes").asDouble() + truth.path("baselineLiveBytes").asDouble();
        if (g1) {
          double heap = entry.getValue()[0] * 1024.0 * 1024.0;
          soft.assertThat((double) w.liveBytes())
              .as(name + " live bytes under G1")
              .isBetween(
                  held * (1 - LIVE_TOLERANCE), held / G1_LIVE_THRESHOLD + G1_HEAP_WASTE * heap);
        } else {
          soft.assertThat((double) w.liveBytes())
              .as(name + " live bytes " + w.evidence().notes())
              .isCloseTo(held, within(held * LIVE_TOLERANCE));
        }
        soft.assertThat(w.collector()).isEqualTo(g1 ? "G1" : "Parallel");
        double replace = truth.path("configuredReplaceBytesPerSecond").asDouble();
        if ("otel".equals(instrumentation)) {
          soft.assertThat(w.promotionBytesPerSecond())
              .as("the agent exports no promotion")
              .isEmpty();
        } else if (!g1) {
          // Under G1 the libraries count promotion as old-generation growth across young pauses,
          // which mixed collections offset; docs/metrics.md says so. Checked where it is defined.
          soft.assertThat(w.promotionBytesPerSecond().orElse(-1))
              .as(name + " promotion")
              .isCloseTo(replace, within(replace * PROMOTION_TOLERANCE));
        }
        double jdkGc = (last.gcMillis()[i] - first.gcMillis()[i]) / 1000.0 / spanSeconds;
        soft.assertThat(jdkGc).as(name + " GC time per the JDK").isPositive();
        soft.assertThat(w.gcSecondsPerSecond())
            .as(name + " GC seconds per second against GarbageCollectorMXBean")
            .isCloseTo(jdkGc, within(jdkGc * GC_TOLERANCE + EDGE_PAUSE_SECONDS / spanSeconds));
        i++;
      }
      soft.assertAll();
    } finally {
      for (WorkloadProcess jvm : jvms) {
        jvm.close();
      }
    }
  }

  /** How often the JDK's GC totals are read. */
  private static final long GC_READING_MILLIS = 500;

  /** GarbageCollectorMXBean time totals of every JVM at one moment. */
  record GcReading(Instant at, long[] gcMillis) {
    static GcReading of(List<WorkloadProcess> jvms) {
      long[] totals = new long[jvms.size()];
      for (int i = 0; i < totals.length; i++) {
        try {
          totals[i] = jvms.get(i).gcMillis();
        } catch (Exception e) {
          throw new IllegalStateException(e);
        }
      }
      return new GcReading(Instant.now(), totals);
    }

    static GcReading nearest(List<GcReading> readings, Instant at) {
      return readings.stream()
          .min(Comparator.comparing(r -> Duration.between(r.at(), at).abs()))
          .orElseThrow();
    }
  }

  /**
   * Instant and range queries Prometheus has answered, from its own request counter
   * (prometheus_http_requests_total, documented in Prometheus' HTTP API instrumentation).
   */
  private static long queriesServed(PrometheusServer prometheus) throws Exception {
    String text =
        java.net.http.HttpClient.newHttpClient()
            .send(
                java.net.http.HttpRequest.newBuilder(prometheus.uri().resolve("/metrics")).build(),
                java.net.http.HttpResponse.BodyHandlers.ofString())
            .body();
    return text.lines()
        .filter(l -> l.startsWith("prometheus_http_requests_total{"))
        .filter(
            l ->
                l.contains("handler=\"/api/v1/query\"")
                    || l.contains("handler=\"/api/v1/query_range\""))
        .mapToLong(l -> (long) Double.parseDouble(l.substring(l.lastIndexOf(' ') + 1)))
        .sum();
  }

  private static void awaitScrapes(PrometheusClient client, long count) {
    String query =
        "count_over_time(up{namespace=\""
            + NAMESPACE
            + "\"}["
            + (WARM_UP_SECONDS + WINDOW_SECONDS)
            + "s]) >= "
            + count;
    await()
        .atMost(Duration.ofSeconds(4 * WINDOW_SECONDS))
        .pollInterval(Duration.ofMillis(500))
        .until(() -> client.query(query, Instant.now()).samples().size() == FLEET.size());
  }
}
