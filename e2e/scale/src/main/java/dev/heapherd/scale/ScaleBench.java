package dev.heapherd.scale;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import dev.heapherd.harness.ControlPlane;
import io.fabric8.kubernetes.api.model.ContainerBuilder;
import io.fabric8.kubernetes.api.model.GenericKubernetesResource;
import io.fabric8.kubernetes.api.model.GenericKubernetesResourceBuilder;
import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.api.model.NamespaceBuilder;
import io.fabric8.kubernetes.api.model.PodBuilder;
import io.fabric8.kubernetes.api.model.PodSpec;
import io.fabric8.kubernetes.api.model.PodSpecBuilder;
import io.fabric8.kubernetes.api.model.Quantity;
import io.fabric8.kubernetes.api.model.apps.DeploymentBuilder;
import io.fabric8.kubernetes.api.model.apps.StatefulSetBuilder;
import io.fabric8.kubernetes.client.KubernetesClient;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;

/**
 * The operator at cluster scale: creates namespaces, Deployments, StatefulSets and their Pod
 * objects (created directly, never run) on the real control plane, serves JVM series for every pod
 * to the real Prometheus, starts the operator jar with the chart's default heap and prints its
 * memory, time to every pool's first proposal, reconcile time and requests per reconcile, at the
 * full size and at a tenth of it. Run by {@code ./dev.sh scale}.
 */
public final class ScaleBench {

  /** One size of the bench. */
  record Scale(int namespaces, int workloads, int podsPerWorkload, int pools) {
    Scale tenth() {
      return new Scale(namespaces / 10, workloads / 10, podsPerWorkload, pools / 10);
    }
  }

  /** What one size measured. */
  record Result(
      Scale scale,
      long operatorHeapAfterGcBytes,
      long operatorRssBytes,
      long operatorPeakRssBytes,
      double firstProposalsSeconds,
      double reconcileMedianSeconds,
      double reconcileP99Seconds,
      long reconciles,
      double apiRequestsPerReconcile,
      double promqlQueriesPerReconcile,
      double promqlQueriesPerPoolMinute) {}

  /** The issue-sized bench: 50 namespaces, 2,000 workloads, 10,000 pods, 40 pools. */
  static final Scale FULL = new Scale(50, 2000, 5, 40);

  /** One StatefulSet per this many workloads, the rest Deployments; our mix. */
  private static final int STATEFUL_EVERY = 4;

  /** The chart's defaults (helm/heapherd/values.yaml): -Xmx and the container memory limit. */
  static final String CHART_JAVA_OPTIONS = "-Xmx192m -XX:+UseSerialGC";

  private static final long CHART_MEMORY_LIMIT_BYTES = 384L << 20;

  /** Seconds between scrapes: many targets, so slower than the tests' one second. */
  static final int SCRAPE_SECONDS = 15;

  /** The pools' metrics window: at least ten scrapes (the estimator's minimum) with room. */
  private static final int WINDOW_SECONDS = 180;

  /** How long steady reconciling is watched: three of the operator's one-minute re-visits. */
  private static final int MEASURE_SECONDS = 180;

  /** Longest wait for every pool's first proposal before the run counts as failed. */
  private static final Duration FIRST_PROPOSAL_LIMIT = Duration.ofMinutes(10);

  /** Threads creating API objects. */
  private static final int CREATORS = 8;

  /** The workloads' heap and container limit: a mid-size JVM service, our scenario. */
  private static final long HEAP_BYTES = 512L << 20;

  private static final long LIMIT_BYTES = 800L << 20;

  /** Characters of ReplicaSet hashes and pod suffixes (the Kubernetes controllers' alphabet). */
  private static final String NAME_CHARS = "bcdfghjklmnpqrstvwxz2456789";

  private static final String POOL_LABEL = "heapherd.dev/pool";
  private static final HttpClient HTTP = HttpClient.newHttpClient();

  private ScaleBench() {}

  /** Runs the tenth then the full size; writes the figures as JSON to the path in args[0]. */
  public static void main(String[] args) throws Exception {
    Path out = Path.of(args.length > 0 ? args[0] : "docs/bench/scale.json");
    Path operatorJar = Path.of(args.length > 1 ? args[1] : "operator/target/heapherd.jar");
    Path crd = Path.of(args.length > 2 ? args[2] : "crds/heappools.heapherd.dev-v1.yml");
    List<Result> results = new ArrayList<>();
    for (Scale scale : List.of(FULL.tenth(), FULL)) {
      log(
          "scale: %d namespaces, %d workloads, %d pods, %d pools",
          scale.namespaces(),
          scale.workloads(),
          scale.workloads() * scale.podsPerWorkload(),
          scale.pools());
      results.add(run(scale, operatorJar, crd));
      print(results.get(results.size() - 1));
    }
    Files.createDirectories(out.toAbsolutePath().getParent());
    new ObjectMapper()
        .enable(SerializationFeature.INDENT_OUTPUT)
        .writeValue(
            out.toFile(),
            Map.of("chartMemoryLimitBytes", CHART_MEMORY_LIMIT_BYTES, "runs", results));
    log("figures written to %s", out);
  }

  private static Result run(Scale scale, Path operatorJar, Path crd) throws Exception {
    Path dir = Files.createTempDirectory("heapherd-scale");
    List<SyntheticExporter.FakePod> fakePods = new ArrayList<>();
    List<HasMetadata> objects = new ArrayList<>();
    List<GenericKubernetesResource> pools = new ArrayList<>();
    fleet(scale, fakePods, objects, pools);
    try (SyntheticExporter exporter = SyntheticExporter.start(fakePods);
        Prometheus prometheus = Prometheus.start(dir.resolve("prometheus"), exporter, fakePods);
        ControlPlane cp = ControlPlane.start(dir.resolve("control-plane"));
        KubernetesClient client = cp.client()) {
      long dataSince = System.nanoTime();
      ControlPlane.installCrd(client, crd);
      long created = System.nanoTime();
      create(client, objects);
      log("created %d objects in %.0f s", objects.size(), (System.nanoTime() - created) / 1e9);
      for (GenericKubernetesResource pool : pools) {
        client.resource(pool).create();
      }
      long wait =
          (WINDOW_SECONDS + 2L * SCRAPE_SECONDS) * 1_000_000_000L - (System.nanoTime() - dataSince);
      if (wait > 0) {
        log("waiting %d s for a full metrics window", wait / 1_000_000_000L);
        Thread.sleep(wait / 1_000_000L);
      }
      try (OperatorProcess operator =
          OperatorProcess.start(operatorJar, cp.kubeconfig(), prometheus, dir)) {
        double firstSeconds = awaitProposals(client, pools.size(), operator);
        log("every pool has a proposal %.1f s after the operator started", firstSeconds);
        Map<String, Double> before = operator.counters();
        double queriesBefore = prometheus.queriesServed();
        Thread.sleep(MEASURE_SECONDS * 1000L);
        Map<String, Double> after = operator.counters();
        double queries = prometheus.queriesServed() - queriesBefore;
        long reconciles =
            Math.round(delta(before, after, "heapherd_reconcile_duration_seconds_count"));
        double apiRequests = delta(before, after, "heapherd_api_requests_total");
        double p50 = prometheus.reconcileQuantile(0.5, MEASURE_SECONDS);
        double p99 = prometheus.reconcileQuantile(0.99, MEASURE_SECONDS);
        long heap = operator.heapAfterGcBytes();
        return new Result(
            scale,
            heap,
            operator.rssBytes("VmRSS"),
            operator.rssBytes("VmHWM"),
            firstSeconds,
            p50,
            p99,
            reconciles,
            reconciles == 0 ? Double.NaN : apiRequests / reconciles,
            reconciles == 0 ? Double.NaN : queries / reconciles,
            queries / pools.size() / (MEASURE_SECONDS / 60.0));
      }
    }
  }

  /** The bench's objects: workloads spread over the namespaces, pools in the first ones. */
  private static void fleet(
      Scale scale,
      List<SyntheticExporter.FakePod> fakePods,
      List<HasMetadata> objects,
      List<GenericKubernetesResource> pools) {
    int perNamespace = scale.workloads() / scale.namespaces();
    for (int n = 0; n < scale.namespaces(); n++) {
      String ns = String.format(Locale.ROOT, "quarry-%02d", n);
      objects.add(new NamespaceBuilder().withNewMetadata().withName(ns).endMetadata().build());
      boolean pooled = n < scale.pools();
      for (int w = 0; w < perNamespace; w++) {
        String name = String.format(Locale.ROOT, "ledger-%03d", w);
        boolean stateful = w % STATEFUL_EVERY == STATEFUL_EVERY - 1;
        Map<String, String> labels = new LinkedHashMap<>(Map.of("app", name));
        if (pooled) {
          labels.put(POOL_LABEL, ns);
        }
        PodSpec spec = podSpec();
        if (stateful) {
          objects.add(
              new StatefulSetBuilder()
                  .withNewMetadata()
                  .withNamespace(ns)
                  .withName(name)
                  .withLabels(labels)
                  .endMetadata()
                  .withNewSpec()
                  .withServiceName(name)
                  .withReplicas(scale.podsPerWorkload())
                  .withNewSelector()
                  .withMatchLabels(Map.of("app", name))
                  .endSelector()
                  .withNewTemplate()
                  .withNewMetadata()
                  .withLabels(Map.of("app", name))
                  .endMetadata()
                  .withSpec(spec)
                  .endTemplate()
                  .endSpec()
                  .build());
        } else {
          objects.add(
              new DeploymentBuilder()
                  .withNewMetadata()
                  .withNamespace(ns)
                  .withName(name)
                  .withLabels(labels)
                  .endMetadata()
                  .withNewSpec()
                  .withReplicas(scale.podsPerWorkload())
                  .withNewSelector()
                  .withMatchLabels(Map.of("app", name))
                  .endSelector()
                  .withNewTemplate()
                  .withNewMetadata()
                  .withLabels(Map.of("app", name))
                  .endMetadata()
                  .withSpec(spec)
                  .endTemplate()
                  .endSpec()
                  .build());
        }
        int seed = (ns + "/" + name).hashCode();
        String hash = token(seed, 10);
        for (int p = 0; p < scale.podsPerWorkload(); p++) {
          String pod =
              stateful ? name + "-" + p : name + "-" + hash + "-" + token(seed * 31 + p, 5);
          objects.add(
              new PodBuilder()
                  .withNewMetadata()
                  .withNamespace(ns)
                  .withName(pod)
                  .withLabels(Map.of("app", name))
                  .endMetadata()
                  .withSpec(podSpec())
                  .build());
          fakePods.add(fakePod(ns, pod, seed));
        }
      }
      if (pooled) {
        long budget = (long) (perNamespace * scale.podsPerWorkload() * LIMIT_BYTES * 0.95);
        pools.add(
            new GenericKubernetesResourceBuilder()
                .withApiVersion("heapherd.dev/v1alpha1")
                .withKind("HeapPool")
                .withNewMetadata()
                .withNamespace(ns)
                .withName("ledgers")
                .endMetadata()
                .withAdditionalProperties(
                    Map.of(
                        "spec",
                        Map.of(
                            "mode", "DryRun",
                            "memoryBudget", Long.toString(budget),
                            "selector", Map.of("matchLabels", Map.of(POOL_LABEL, ns)),
                            "metrics", Map.of("windowSeconds", WINDOW_SECONDS))))
                .build());
      }
    }
  }

  /** Figures of one pod, alike within its workload (seeded by it) and differing between them. */
  private static SyntheticExporter.FakePod fakePod(String ns, String pod, int seed) {
    double u = ((seed & 0x7fffffff) % 1000) / 1000.0;
    return new SyntheticExporter.FakePod(
        ns,
        pod,
        HEAP_BYTES,
        (long) (HEAP_BYTES * (0.25 + 0.2 * u)),
        0.004 + 0.016 * u,
        0.001 + 0.004 * (1 - u),
        (1 + 4 * u) * (1 << 20),
        (50 + 150 * u) * (1 << 20));
  }

  private static PodSpec podSpec() {
    return new PodSpecBuilder()
        .withAutomountServiceAccountToken(false)
        .withContainers(
            new ContainerBuilder()
                .withName("app")
                .withImage("registry.invalid/quarry/ledger:1")
                .addNewEnv()
                .withName("JAVA_TOOL_OPTIONS")
                .withValue("-Xmx" + (HEAP_BYTES >> 20) + "m")
                .endEnv()
                .withNewResources()
                .withLimits(Map.of("memory", new Quantity(Long.toString(LIMIT_BYTES))))
                .withRequests(Map.of("memory", new Quantity(Long.toString(LIMIT_BYTES))))
                .endResources()
                .build())
        .build();
  }

  private static String token(int seed, int length) {
    StringBuilder out = new StringBuilder();
    long x = seed & 0xffffffffL;
    for (int i = 0; i < length; i++) {
      x = x * 6364136223846793005L + 1442695040888963407L;
      out.append(NAME_CHARS.charAt((int) ((x >>> 33) % NAME_CHARS.length())));
    }
    return out.toString();
  }

  /** Creates {@code objects} in order of kind (namespaces first), several at a time. */
  private static void create(KubernetesClient client, List<HasMetadata> objects) throws Exception {
    List<HasMetadata> namespaces =
        objects.stream().filter(o -> o.getKind().equals("Namespace")).toList();
    for (HasMetadata ns : namespaces) {
      client.resource(ns).create();
    }
    ExecutorService pool = Executors.newFixedThreadPool(CREATORS);
    try {
      List<Future<?>> done = new ArrayList<>();
      for (HasMetadata o : objects) {
        if (!o.getKind().equals("Namespace")) {
          done.add(pool.submit(() -> createRetrying(client, o)));
        }
      }
      for (Future<?> f : done) {
        f.get();
      }
    } finally {
      pool.shutdownNow();
    }
  }

  /** Pods are refused until their namespace's default service account exists: retry a while. */
  private static Object createRetrying(KubernetesClient client, HasMetadata o)
      throws InterruptedException {
    for (int attempt = 0; ; attempt++) {
      try {
        return client.resource(o).create();
      } catch (io.fabric8.kubernetes.client.KubernetesClientException e) {
        if (attempt > 60) {
          throw e;
        }
        Thread.sleep(1000);
      }
    }
  }

  private static double awaitProposals(KubernetesClient client, int pools, OperatorProcess operator)
      throws Exception {
    long start = operator.startedNanos();
    while (System.nanoTime() - start < FIRST_PROPOSAL_LIMIT.toNanos()) {
      long withProposal =
          client
              .genericKubernetesResources("heapherd.dev/v1alpha1", "HeapPool")
              .inAnyNamespace()
              .list()
              .getItems()
              .stream()
              .filter(
                  p ->
                      p.getAdditionalProperties().get("status") instanceof Map<?, ?> s
                          && s.get("proposal") != null)
              .count();
      if (withProposal == pools) {
        return (System.nanoTime() - start) / 1e9;
      }
      operator.checkAlive();
      Thread.sleep(500);
    }
    throw new IllegalStateException("not every pool had a proposal within " + FIRST_PROPOSAL_LIMIT);
  }

  private static double delta(Map<String, Double> before, Map<String, Double> after, String name) {
    return after.getOrDefault(name, 0.0) - before.getOrDefault(name, 0.0);
  }

  private static void print(Result r) {
    Scale s = r.scale();
    log(
        "--- %d namespaces, %d workloads, %d pods, %d pools",
        s.namespaces(), s.workloads(), s.workloads() * s.podsPerWorkload(), s.pools());
    log("operator heap after GC      %6.1f MiB", r.operatorHeapAfterGcBytes() / 1048576.0);
    log(
        "operator RSS (peak)         %6.1f MiB (%6.1f MiB); chart limit %d MiB",
        r.operatorRssBytes() / 1048576.0,
        r.operatorPeakRssBytes() / 1048576.0,
        CHART_MEMORY_LIMIT_BYTES >> 20);
    log("every pool's first proposal %6.1f s after start", r.firstProposalsSeconds());
    log(
        "reconcile time median, p99  %6.3f s, %6.3f s (%d reconciles in %d s)",
        r.reconcileMedianSeconds(), r.reconcileP99Seconds(), r.reconciles(), MEASURE_SECONDS);
    log("API requests per reconcile  %6.2f", r.apiRequestsPerReconcile());
    log(
        "PromQL queries per reconcile %5.2f (per pool and minute %5.2f)",
        r.promqlQueriesPerReconcile(), r.promqlQueriesPerPoolMinute());
  }

  static void log(String format, Object... args) {
    System.out.println("scale: " + String.format(Locale.ROOT, format, args));
  }

  /** The text of {@code uri}. */
  static String get(URI uri) throws IOException, InterruptedException {
    return HTTP.send(
            HttpRequest.newBuilder(uri).timeout(Duration.ofSeconds(30)).build(),
            HttpResponse.BodyHandlers.ofString())
        .body();
  }

  /** Sums the samples of every series named {@code name} in a Prometheus text exposition. */
  static Map<String, Double> sums(String exposition) {
    Map<String, Double> out = new LinkedHashMap<>();
    for (String line : exposition.split("\n")) {
      if (line.isEmpty() || line.startsWith("#")) {
        continue;
      }
      int brace = line.indexOf('{');
      int space = line.lastIndexOf(' ');
      String name = line.substring(0, brace > 0 ? brace : line.indexOf(' '));
      try {
        out.merge(name, Double.parseDouble(line.substring(space + 1)), Double::sum);
      } catch (NumberFormatException e) {
        // A value such as NaN's spelling variants is not a count: skip it.
      }
    }
    return out;
  }

  /** Waits up to {@code seconds} for {@code p} to end, then kills it. */
  static void stop(Process p, long seconds) throws InterruptedException {
    p.destroy();
    if (!p.waitFor(seconds, TimeUnit.SECONDS)) {
      p.destroyForcibly();
      p.waitFor(seconds, TimeUnit.SECONDS);
    }
  }
}
