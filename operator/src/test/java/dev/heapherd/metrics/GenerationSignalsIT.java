package dev.heapherd.metrics;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;
import static org.awaitility.Awaitility.await;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.heapherd.engine.GcConstants;
import dev.heapherd.engine.GcModel;
import dev.heapherd.harness.PrometheusServer;
import dev.heapherd.input.Snapshot;
import dev.heapherd.plan.Planner;
import java.io.IOException;
import java.net.URLEncoder;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.assertj.core.api.SoftAssertions;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * The generation signals (heap limit, young and old capacity, start-up live bytes, allocation)
 * measured from real JVMs through the real Prometheus, under each instrumentation, checked against
 * references outside the project: the JVM's own flags (PrintFlagsFinal of a JVM started with the
 * same options), the MemoryPoolMXBeans of the measured JVM, and the workload's configured rates.
 * One Prometheus serves every run; each run's JVMs start together.
 */
class GenerationSignalsIT {

  /** Thirty one-second scrapes: a test-sized window, as in FleetMetricsIT. */
  private static final long WINDOW_SECONDS = 30;

  /** Scrapes before the window, so the young generation has settled after start. */
  private static final long WARM_UP_SECONDS = 10;

  /** Scrapes a pod may miss in the window on two busy cores and still count as scraped. */
  private static final long MISSED_SCRAPES = 3;

  /** The heap limit within 1% of the JVM's MaxHeapSize (the brief's bound). */
  private static final double HEAP_TOLERANCE = 0.01;

  /**
   * Old share within one point of NewRatio / (NewRatio + 1): the young generation is aligned to the
   * space alignment, a fraction of a percent at these heaps.
   */
  private static final double OLD_SHARE_TOLERANCE = 0.01;

  /** Allocation within a factor of 1.5 of the configured rate (the brief's bound). */
  private static final double ALLOCATION_FACTOR = 1.5;

  /** The curve through today's point: same arithmetic, so only rounding separates the two. */
  private static final double CURVE_TOLERANCE = 1e-9;

  /** The workload's live set: well under every old generation here, so nothing thrashes. */
  private static final long LIVE_MIB = 64;

  /** Live objects replaced per second: some promotion, so the old pool is in use. */
  private static final double REPLACE_MIB_PER_SECOND = 2;

  /** Short-lived garbage: a young collection every few seconds even in G1's largest young. */
  private static final double GARBAGE_MIB_PER_SECOND = 40;

  private static final double MIB = 1024.0 * 1024.0;

  /** How long the PrintFlagsFinal JVM gets: it only prints and exits. */
  private static final Duration FLAGS_TIMEOUT = Duration.ofSeconds(60);

  private static final ObjectMapper JSON = new ObjectMapper();

  /**
   * One JVM of a run. Odd sizes on purpose: 333m is aligned up by HotSpot (to 334 MiB here), so the
   * check compares with what the JVM made of -Xmx, not with -Xmx itself; 512m starts with a smaller
   * committed heap on this machine (InitialHeapSize is a 64th of RAM), so the heap grows.
   */
  private record Config(String pod, String collectorFlag, String collector, long maxHeapMib) {
    String workload() {
      return PodOwners.of(pod).orElseThrow().name();
    }
  }

  private static final List<Config> CONFIGS =
      List.of(
          new Config("g1-small-0", "-XX:+UseG1GC", "G1", 333),
          new Config("g1-large-0", "-XX:+UseG1GC", "G1", 512),
          new Config("parallel-small-0", "-XX:+UseParallelGC", "Parallel", 333),
          new Config("parallel-large-0", "-XX:+UseParallelGC", "Parallel", 512),
          new Config("serial-small-0", "-XX:+UseSerialGC", "Serial", 333));

  private static Path dir;
  private static PrometheusServer prometheus;
  private static PrometheusClient client;

  @BeforeAll
  static void startPrometheus() throws Exception {
    dir = Files.createTempDirectory("generations");
    prometheus = PrometheusServer.start(dir.resolve("prometheus"));
    client = PrometheusClient.connect(PrometheusEndpoint.of(prometheus.uri()));
  }

  @AfterAll
  static void stopPrometheus() {
    if (prometheus != null) {
      prometheus.close();
    }
  }

  /**
   * Every query of every profile is valid PromQL to the real Prometheus: its HTTP API answers
   * {@code "status":"success"} (a parse error is {@code "error"} with HTTP 400).
   */
  @Test
  void everyProfileQueryParsesInTheRealPrometheus() throws Exception {
    HttpClient http = HttpClient.newHttpClient();
    SoftAssertions soft = new SoftAssertions();
    for (QueryProfile profile : QueryProfiles.all()) {
      for (Signal signal : Signal.values()) {
        for (String query : profile.queries(signal, "namespace=\"parse\"", WINDOW_SECONDS)) {
          HttpResponse<String> response =
              http.send(
                  HttpRequest.newBuilder(
                          prometheus
                              .uri()
                              .resolve(
                                  "/api/v1/query?query="
                                      + URLEncoder.encode(query, StandardCharsets.UTF_8)))
                      .timeout(Duration.ofSeconds(10))
                      .build(),
                  HttpResponse.BodyHandlers.ofString());
          soft.assertThat(JSON.readTree(response.body()).path("status").asText())
              .as(profile.name() + " " + signal.key() + ": " + query + " -> " + response.body())
              .isEqualTo("success");
        }
      }
    }
    soft.assertAll();
  }

  @ParameterizedTest(name = "{0}")
  @ValueSource(strings = {"micrometer", "client-java", "otel"})
  void generationSignalsMatchTheJvmsOwnFigures(String instrumentation) throws Exception {
    String namespace = "gen-" + instrumentation;
    QueryProfile profile = QueryProfiles.named(instrumentation).orElseThrow();
    List<WorkloadProcess> jvms = startAll(instrumentation);
    try {
      List<PrometheusServer.Target> targets = new ArrayList<>();
      for (int i = 0; i < CONFIGS.size(); i++) {
        targets.add(
            new PrometheusServer.Target(
                jvms.get(i).metricsHostPort(),
                Map.of("namespace", namespace, "pod", CONFIGS.get(i).pod())));
      }
      prometheus.setTargets(targets);
      Instant scrapingFrom = Instant.now();
      Map<Config, Map<String, String>> flags = new HashMap<>();
      for (Config c : CONFIGS) {
        flags.put(c, printFlagsFinal(c));
      }
      awaitWindow(namespace, scrapingFrom);
      Snapshot snapshot =
          new SnapshotBuilder(new FleetReader(client, profile))
              .build(namespace, WINDOW_SECONDS, Instant.now(), List.of());
      assertThat(snapshot.held()).as("held workloads").isEmpty();

      SoftAssertions soft = new SoftAssertions();
      for (int i = 0; i < CONFIGS.size(); i++) {
        Config c = CONFIGS.get(i);
        Snapshot.Workload w =
            snapshot.workloads().stream()
                .filter(x -> x.name().equals(c.workload()))
                .findFirst()
                .orElseThrow(() -> new AssertionError("no workload " + c.workload()));
        check(soft, instrumentation, c, w, flags.get(c), jvms.get(i).truth(), profile);
      }
      soft.assertAll();
    } finally {
      prometheus.setTargets(List.of());
      for (WorkloadProcess jvm : jvms) {
        jvm.close();
      }
    }
  }

  private static void check(
      SoftAssertions soft,
      String instrumentation,
      Config c,
      Snapshot.Workload w,
      Map<String, String> flags,
      JsonNode truth,
      QueryProfile profile) {
    String as = instrumentation + " " + c.collector() + " -Xmx" + c.maxHeapMib() + "m";
    long maxHeapSize = Long.parseLong(flags.get("MaxHeapSize"));
    long maxNewSize = Long.parseLong(flags.get("MaxNewSize"));
    long newRatio = Long.parseLong(flags.get("NewRatio"));
    double heap = w.heapMaxBytes();
    log(as, w, maxHeapSize, truth);

    soft.assertThat(w.collector()).as(as + " collector").isEqualTo(c.collector());
    // Reference: the measured JVM's own MaxHeapSize (HotSpotDiagnosticMXBean, via /truth) is the
    // one PrintFlagsFinal prints for the same options: the reference is the JVM's, not ours.
    soft.assertThat(truth.path("maxHeapSizeOptionBytes").asLong())
        .as(as + " MaxHeapSize of the measured JVM against PrintFlagsFinal")
        .isEqualTo(maxHeapSize);
    // Reference: PrintFlagsFinal MaxHeapSize, -Xmx after HotSpot's alignment.
    soft.assertThat(heap)
        .as(as + " heapMaxBytes against PrintFlagsFinal MaxHeapSize " + maxHeapSize)
        .isCloseTo(maxHeapSize, within(maxHeapSize * HEAP_TOLERANCE));

    soft.assertThat(w.layout().oldCapacityBytes()).as(as + " oldCapacityBytes present").isPresent();
    double oldShare = w.layout().oldCapacityBytes().orElse(0) / heap;
    if (c.collector().equals("G1")) {
      // Reference: the measured JVM's MemoryPoolMXBean "G1 Old Gen" reports the heap limit as its
      // maximum (old regions may take the whole heap).
      soft.assertThat(truth.path("heapPools").path("G1 Old Gen").path("maxBytes").asLong())
          .as(as + " G1 Old Gen MemoryPoolMXBean max against MaxHeapSize")
          .isEqualTo(maxHeapSize);
      soft.assertThat(oldShare).as(as + " old share").isCloseTo(1, within(HEAP_TOLERANCE));
    } else {
      // Reference: HotSpot's documented default -XX:NewRatio=2 (old:young = 2:1), and the value
      // PrintFlagsFinal reports for this JVM.
      soft.assertThat(newRatio).as(as + " NewRatio per PrintFlagsFinal").isEqualTo(2);
      soft.assertThat(oldShare)
          .as(as + " old share against NewRatio/(NewRatio+1)")
          .isCloseTo((double) newRatio / (newRatio + 1), within(OLD_SHARE_TOLERANCE))
          .isCloseTo(2.0 / 3, within(OLD_SHARE_TOLERANCE));
      // Reference: PrintFlagsFinal MaxNewSize: the old generation is the rest of the heap.
      soft.assertThat((double) w.layout().oldCapacityBytes().orElse(0))
          .as(as + " oldCapacityBytes against MaxHeapSize - MaxNewSize")
          .isCloseTo(maxHeapSize - maxNewSize, within(maxHeapSize * HEAP_TOLERANCE));
    }

    double young = w.layout().youngCapacityBytes().orElse(0);
    soft.assertThat(young).as(as + " youngCapacityBytes").isPositive().isLessThanOrEqualTo(heap);
    if (c.collector().equals("G1")) {
      // Reference: PrintFlagsFinal G1NewSizePercent and G1MaxNewSizePercent (5 and 60 by default).
      double min = Long.parseLong(flags.get("G1NewSizePercent")) / 100.0;
      double max = Long.parseLong(flags.get("G1MaxNewSizePercent")) / 100.0;
      soft.assertThat(young / heap).as(as + " young share").isBetween(min, max);
    } else {
      // Reference: PrintFlagsFinal MaxNewSize, the young generation's largest size.
      soft.assertThat(young).as(as + " young capacity against MaxNewSize").isLessThan(maxNewSize);
    }

    soft.assertThat(w.youngGcSecondsPerSecond()).as(as + " young GC time").isPositive();
    GcModel model = GcConstants.estimate(Planner.observation(w));
    soft.assertThat(model.youngConstantBytes()).as(as + " young constant").isPositive();
    soft.assertThat(model.generations().youngShareMeasured())
        .as(as + " young share measured")
        .isTrue();
    soft.assertThat(model.generations().oldShareMeasured()).as(as + " old share measured").isTrue();
    soft.assertThat(model.gcFraction(w.heapMaxBytes(), w.liveBytes()))
        .as(as + " curve through today's point")
        .isCloseTo(w.gcSecondsPerSecond(), within(w.gcSecondsPerSecond() * CURVE_TOLERANCE));

    // Only the profiles that map a signal can be held to it; the others must say nothing.
    boolean allocationMapped =
        !profile.templates().getOrDefault(Signal.ALLOCATION_BYTES_PER_SECOND, List.of()).isEmpty();
    if (allocationMapped) {
      // Reference: the rates the workload was started with (--replace-mib-per-second plus
      // --garbage-mib-per-second), as its /truth reports them.
      double configured =
          truth.path("configuredReplaceBytesPerSecond").asDouble()
              + truth.path("configuredGarbageBytesPerSecond").asDouble();
      soft.assertThat(w.layout().allocationBytesPerSecond().orElse(0))
          .as(as + " allocation against configured " + configured)
          .isBetween(configured / ALLOCATION_FACTOR, configured * ALLOCATION_FACTOR);
    } else {
      soft.assertThat(w.layout().allocationBytesPerSecond()).as(as + " allocation").isEmpty();
    }
    boolean startupMapped =
        !profile.templates().getOrDefault(Signal.STARTUP_LIVE_BYTES, List.of()).isEmpty();
    if (startupMapped) {
      soft.assertThat(w.layout().startupLiveBytes().orElse(-1))
          .as(as + " startupLiveBytes against liveBytes")
          .isGreaterThanOrEqualTo(w.liveBytes());
    } else {
      soft.assertThat(w.layout().startupLiveBytes()).as(as + " startup live").isEmpty();
    }
  }

  /** The figures of one workload next to the references, for the test's log. */
  private static void log(String as, Snapshot.Workload w, long maxHeapSize, JsonNode truth) {
    double heap = w.heapMaxBytes();
    System.out.printf(
        Locale.ROOT,
        "%s: heapMax %d (MaxHeapSize %d, %+.3f%%) young %.3f old %.3f of heap; live %.1f MiB"
            + " startupLive %s; gc %.5f young gc %.5f s/s; allocation %s MiB/s (configured %.1f);"
            + " pools %s%n",
        as,
        w.heapMaxBytes(),
        maxHeapSize,
        100.0 * (heap - maxHeapSize) / maxHeapSize,
        w.layout().youngCapacityBytes().orElse(0) / heap,
        w.layout().oldCapacityBytes().orElse(0) / heap,
        w.liveBytes() / MIB,
        w.layout().startupLiveBytes(),
        w.gcSecondsPerSecond(),
        w.youngGcSecondsPerSecond(),
        w.layout().allocationBytesPerSecond().isPresent()
            ? String.format(
                Locale.ROOT, "%.1f", w.layout().allocationBytesPerSecond().getAsDouble() / MIB)
            : "none",
        (truth.path("configuredReplaceBytesPerSecond").asDouble()
                + truth.path("configuredGarbageBytesPerSecond").asDouble())
            / MIB,
        truth.path("heapPools"));
  }

  /** Starts every configuration's JVM at once, so a run waits for the slowest start only. */
  private static List<WorkloadProcess> startAll(String instrumentation) throws Exception {
    ExecutorService pool = Executors.newFixedThreadPool(CONFIGS.size());
    List<Future<WorkloadProcess>> futures = new ArrayList<>();
    for (Config c : CONFIGS) {
      futures.add(
          pool.submit(
              () ->
                  WorkloadProcess.start(
                      new WorkloadProcess.Spec(
                          instrumentation,
                          c.collectorFlag(),
                          c.maxHeapMib(),
                          LIVE_MIB,
                          REPLACE_MIB_PER_SECOND,
                          GARBAGE_MIB_PER_SECOND),
                      dir,
                      instrumentation + "-" + c.pod())));
    }
    pool.shutdown();
    List<WorkloadProcess> started = new ArrayList<>();
    Exception failure = null;
    for (Future<WorkloadProcess> f : futures) {
      try {
        started.add(f.get());
      } catch (Exception e) {
        failure = failure == null ? e : failure;
      }
    }
    if (failure != null) {
      started.forEach(WorkloadProcess::close);
      throw failure;
    }
    return started;
  }

  /** Waits for the warm-up and a window in which every pod was scraped nearly every second. */
  private static void awaitWindow(String namespace, Instant scrapingFrom) {
    Instant windowFull = scrapingFrom.plusSeconds(WARM_UP_SECONDS + WINDOW_SECONDS);
    String query =
        "count_over_time(up{namespace=\""
            + namespace
            + "\"}["
            + WINDOW_SECONDS
            + "s]) >= "
            + (WINDOW_SECONDS - MISSED_SCRAPES);
    await()
        .atMost(Duration.ofSeconds(4 * (WARM_UP_SECONDS + WINDOW_SECONDS)))
        .pollInterval(Duration.ofMillis(500))
        .until(
            () ->
                Instant.now().isAfter(windowFull)
                    && client.query(query, Instant.now()).samples().size() == CONFIGS.size());
  }

  /** {@code type Name = value {origin}} lines of PrintFlagsFinal. */
  private static final Pattern FLAG_LINE = Pattern.compile("^\\s*\\S+\\s+(\\w+)\\s+:?=\\s+(\\S+)");

  /**
   * The flags a JVM of this JDK settles on with the configuration's options: the outside reference.
   * G1NewSizePercent and G1MaxNewSizePercent are experimental flags, printed only once unlocked.
   */
  private static Map<String, String> printFlagsFinal(Config c)
      throws IOException, InterruptedException {
    Path out = dir.resolve("flags-" + c.pod() + ".txt");
    Process process =
        new ProcessBuilder(
                Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                c.collectorFlag(),
                "-Xmx" + c.maxHeapMib() + "m",
                "-XX:+UnlockExperimentalVMOptions",
                "-XX:+PrintFlagsFinal",
                "-version")
            .redirectErrorStream(true)
            .redirectOutput(out.toFile())
            .start();
    try {
      if (!process.waitFor(FLAGS_TIMEOUT.toSeconds(), TimeUnit.SECONDS)) {
        throw new IllegalStateException("java -XX:+PrintFlagsFinal did not exit");
      }
    } finally {
      if (process.isAlive()) {
        process.destroyForcibly().waitFor();
      }
    }
    Map<String, String> flags = new HashMap<>();
    for (String line : Files.readAllLines(out)) {
      Matcher m = FLAG_LINE.matcher(line);
      if (m.find()) {
        flags.put(m.group(1), m.group(2));
      }
    }
    for (String name :
        List.of(
            "MaxHeapSize", "MaxNewSize", "NewRatio", "G1NewSizePercent", "G1MaxNewSizePercent")) {
      assertThat(flags).as("PrintFlagsFinal of " + c).containsKey(name);
    }
    return flags;
  }
}
