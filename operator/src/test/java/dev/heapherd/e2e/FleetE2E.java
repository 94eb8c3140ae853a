package dev.heapherd.e2e;

import static org.assertj.core.api.Assertions.assertThat;
import static org.awaitility.Awaitility.await;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.heapherd.api.HeapPool;
import dev.heapherd.api.HeapPoolStatus;
import dev.heapherd.chart.Chart;
import dev.heapherd.harness.ControlPlane;
import dev.heapherd.harness.PrometheusServer;
import dev.heapherd.input.Quantity;
import dev.heapherd.reconcile.OperatorRuntime;
import dev.heapherd.rollout.Annotations;
import dev.heapherd.rollout.JvmOptions;
import io.fabric8.kubernetes.api.model.Condition;
import io.fabric8.kubernetes.api.model.GenericKubernetesResource;
import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.api.model.NamespaceBuilder;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.coordination.v1.Lease;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.utils.Serialization;
import java.net.URI;
import java.net.URLEncoder;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.concurrent.Executors;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.concurrent.atomic.AtomicLong;
import org.awaitility.core.ConditionTimeoutException;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.MethodOrderer;
import org.junit.jupiter.api.Order;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestMethodOrder;

/**
 * The whole loop on a real control plane: the chart's operator Deployment runs as a pod of our node
 * agent, measures real JVMs through the real Prometheus and rolls heaps out through the real
 * Deployment controller. Everything is asserted from the API server, Prometheus and the JVMs.
 */
@TestMethodOrder(MethodOrderer.OrderAnnotation.class)
class FleetE2E {

  private static final String NS = "tidewater-e2e";
  private static final String OTHER_NS = "tidewater-other";
  private static final String OOM_NS = "tidewater-oom";

  /** The namespaces the operator is installed to watch: every one this test uses. */
  private static final List<String> WATCHED = List.of(NS, OTHER_NS, OOM_NS);

  private static final String POOL = "dispatch";

  /** The pool's budget: today's limits plus room for one surge pod and some to share. */
  private static final long BUDGET_MIB = 1700;

  private static final List<Fleet.Service> SERVICES =
      List.of(
          // Big and quiet: the donor.
          new Fleet.Service("customs-docs", 24, 0.2, 4, 256, 456),
          // Small and busy: old-generation churn and ordinary young garbage on a heap barely
          // above its live set, where young collections come often too.
          new Fleet.Service("rate-quoter", 40, 6, 24, 96, 296),
          new Fleet.Service("route-planner", 32, 1, 12, 128, 328));

  private static final Duration MEASURED = Duration.ofMinutes(5);
  private static final Duration ROLLED = Duration.ofMinutes(8);
  private static final ObjectMapper JSON = new ObjectMapper();

  private static Path work;
  private static ControlPlane cluster;
  private static KubernetesClient client;
  private static NodeAgent agent;
  private static PrometheusServer prometheus;
  private static final HttpClient HTTP = HttpClient.newHttpClient();

  /** The proposal approved in the dry-run scenario, applied in the next ones. */
  private static HeapPoolStatus.Proposal approved;

  private static double gcBefore;

  /** Lines of each operator log a failed wait prints: enough for the last few visits. */
  private static final int OPERATOR_LOG_LINES = 40;

  /** How often pod memory is sampled while the pool rolls. */
  private static final long SAMPLE_MILLIS = 200;

  /** The window GC time is compared over: the pool's metrics window. */
  private static final int GC_WINDOW_SECONDS = 60;

  /** Seconds a new JVM is left to settle before its GC time counts: our choice. */
  private static final int WARM_UP_SECONDS = 45;

  /** Scrapes a busy two-core machine may miss at one-second intervals: our allowance. */
  private static final int SCRAPES_MISSED = 5;

  @BeforeAll
  static void startTheWholeLoop() throws Exception {
    work = Files.createTempDirectory("heapherd-e2e");
    cluster = ControlPlane.start();
    client = cluster.client();
    agent = NodeAgent.start(cluster.kubeconfig(), work.resolve("agent"), client);
    Files.createDirectories(work.resolve("prometheus"));
    prometheus = PrometheusServer.scraping(work.resolve("prometheus"), agent.targets());
    // The chart's namespaced Roles go into the watched namespaces, so those exist first.
    for (String ns : WATCHED) {
      client
          .namespaces()
          .resource(new NamespaceBuilder().withNewMetadata().withName(ns).endMetadata().build())
          .create();
    }
    installChart();
    for (Fleet.Service s : SERVICES) {
      client.resource(Fleet.deployment(NS, POOL, s, 1)).create();
    }
    // Same labels in another namespace: a pool manages only its own namespace.
    client.resource(Fleet.deployment(OTHER_NS, POOL, SERVICES.get(0), 1)).create();
    // A workload an admin's settings push below what it needs: a 64 MiB heap and limit with no
    // margin, for a JVM whose live set is half of that.
    client
        .resource(
            Fleet.deployment(
                OOM_NS, "printing", new Fleet.Service("manifest-printer", 32, 0.5, 4, 128, 320), 0))
        .create();
    for (String ns : WATCHED) {
      await().atMost(Duration.ofMinutes(2)).until(() -> allRunning(ns));
    }
  }

  @AfterAll
  static void stopEverything() throws Exception {
    if (agent != null) {
      agent.close();
    }
    if (prometheus != null) {
      prometheus.close();
    }
    if (client != null) {
      client.close();
    }
    if (cluster != null) {
      cluster.close();
    }
  }

  @Test
  @Order(1)
  void aDryRunPoolPublishesAProposalAndChangesNothing() throws Exception {
    client.resource(pool(NS, POOL, "DryRun", BUDGET_MIB + "Mi", "")).create();
    awaitPool(
        NS,
        POOL,
        MEASURED,
        () -> {
          HeapPool p = heapPool(NS, POOL);
          return p != null
              && p.getStatus() != null
              && p.getStatus().proposal != null
              && p.getStatus().proposal.workloads.size() == SERVICES.size();
        });
    HeapPool p = heapPool(NS, POOL);
    approved = p.getStatus().proposal;
    assertThat(approved.hash).matches("[0-9a-f]{16}");
    assertThat(reason(p, "Ready")).isEqualTo("DryRun");
    // kubectl's table comes from the CRD's printer columns.
    String table = kubectl("get", "heappools", "-n", NS);
    assertThat(table)
        .contains("MODE", "BUDGET", "USED", "GC CHANGE", "STATE", "DryRun", BUDGET_MIB + "Mi");
    for (Fleet.Service s : SERVICES) {
      assertThat(replicaSets(NS, s.name())).as("no pod template changed").isEqualTo(1);
    }
    gcBefore = poolGcSecondsPerSecond();
    assertThat(gcBefore).isPositive();
  }

  @Test
  @Order(2)
  void anApprovedProposalRollsOneAtATimeWithinTheBudgetAndTheStandbyFinishesWhenTheLeaderDies()
      throws Exception {
    long budget = BUDGET_MIB << 20;
    AtomicLong peak = new AtomicLong();
    AtomicInteger mostRolling = new AtomicInteger();
    AtomicInteger samples = new AtomicInteger();
    ScheduledExecutorService sampler = Executors.newSingleThreadScheduledExecutor();
    sampler.scheduleWithFixedDelay(
        () -> {
          try {
            peak.accumulateAndGet(podMemoryBytes(NS), Math::max);
            mostRolling.accumulateAndGet(rolling(NS), Math::max);
            samples.incrementAndGet();
          } catch (RuntimeException e) {
            // A list can fail while the API server is busy; the next sample counts.
          }
        },
        0,
        SAMPLE_MILLIS,
        TimeUnit.MILLISECONDS);
    String leader = leader();
    client
        .resources(HeapPool.class)
        .inNamespace(NS)
        .withName(POOL)
        .edit(
            p -> {
              p.getSpec().mode = "Apply";
              p.getSpec().approvedProposal = approved.hash;
              return p;
            });
    // Kill the leading replica as soon as the first workload rolls: SIGKILL to its process (by the
    // pid its container ID names), and its pod deleted at once so it does not come back under the
    // same identity. The standby must take the Lease and finish the job.
    await().atMost(ROLLED).until(() -> rolling(NS) > 0);
    long killedAt = System.nanoTime();
    ProcessHandle.of(operatorPid(leader)).ifPresent(ProcessHandle::destroyForcibly);
    client.pods().inNamespace(Chart.NAMESPACE).withName(leader).withGracePeriod(0).delete();
    await()
        .atMost(Duration.ofMinutes(1))
        .pollInterval(Duration.ofMillis(200))
        .until(() -> !leader().isEmpty() && !leader().equals(leader));
    Duration takeover = Duration.ofNanos(System.nanoTime() - killedAt);
    System.out.printf(
        "the standby took the Lease %.1f s after the leader died%n", takeover.toMillis() / 1000.0);
    awaitPool(NS, POOL, ROLLED, FleetE2E::approvedProposalRunning);
    sampler.shutdownNow();
    assertThat(sampler.awaitTermination(10, TimeUnit.SECONDS)).isTrue();
    assertThat(samples.get()).as("memory samples taken during the rollout").isGreaterThan(10);

    // One lease period, plus retries: the standby sees the last renewal up to one retry period
    // late (it stamps expiry from when it saw it), tries up to one after expiry, and the client
    // stretches each retry by a random jitter of up to 20 % (Fabric8's LeaderElector, from memory).
    assertThat(takeover)
        .as("takeover after the leader died: within one lease period and its retries")
        .isLessThanOrEqualTo(
            OperatorRuntime.LEASE_DURATION.plus(OperatorRuntime.RETRY_PERIOD.multipliedBy(3)));
    assertThat(peak.get())
        .as("pod memory limits, surge pods included, at every sample")
        .isLessThanOrEqualTo(budget);
    assertThat(mostRolling.get()).as("workloads rolling at once").isEqualTo(1);
    for (var w : approved.workloads) {
      int expected = w.currentHeap.equals(w.proposedHeap) ? 1 : 2;
      assertThat(replicaSets(NS, w.name))
          .as("%s rolled exactly once", w.name)
          .isLessThanOrEqualTo(expected);
      long target = Quantity.parseBytes(w.proposedHeap);
      for (Pod pod : pods(NS, w.name)) {
        assertThat((double) truth(pod).path("maxHeapSizeOptionBytes").asLong())
            .as("%s's JVM heap", pod.getMetadata().getName())
            .isCloseTo(target, org.assertj.core.data.Percentage.withPercentage(5));
      }
    }
    double gcAfter = poolGcSecondsPerSecond();
    System.out.printf(
        "pool GC time: %.4f s/s before, %.4f s/s after the approved proposal%n", gcBefore, gcAfter);
    assertThat(gcAfter).as("pool GC time after (before: %s s/s)", gcBefore).isLessThan(gcBefore);
  }

  @Test
  @Order(3)
  void workloadsOfAnotherNamespaceAreNeverTouched() {
    assertThat(replicaSets(OTHER_NS, SERVICES.get(0).name())).isEqualTo(1);
    Deployment d =
        client.apps().deployments().inNamespace(OTHER_NS).withName(SERVICES.get(0).name()).get();
    assertThat(
            d.getMetadata().getAnnotations() == null ? Map.of() : d.getMetadata().getAnnotations())
        .doesNotContainKey(Annotations.ROLLOUT);
    assertThat(options(d)).startsWith("-Xmx" + SERVICES.get(0).heapMib() + "m");
  }

  @Test
  @Order(4)
  void withPrometheusStoppedPoolsHoldAndSayWhyThenResume() throws Exception {
    prometheus.stop();
    awaitPool(
        NS,
        POOL,
        Duration.ofMinutes(2),
        () -> "MetricsUnavailable".equals(reason(heapPool(NS, POOL), "Ready")));
    Condition metrics = condition(heapPool(NS, POOL), "MetricsAvailable");
    assertThat(metrics.getStatus()).isEqualTo("False");
    assertThat(metrics.getMessage()).isNotBlank();
    assertThat(rolling(NS)).isZero();
    prometheus.launch();
    awaitPool(
        NS,
        POOL,
        Duration.ofMinutes(3),
        () -> "True".equals(condition(heapPool(NS, POOL), "MetricsAvailable").getStatus()));
  }

  @Test
  @Order(5)
  void aWorkloadPushedBelowWhatItNeedsIsOomKilledRolledBackAndMarked() {
    client
        .resource(
            pool(
                OOM_NS,
                "printing",
                "Apply",
                "330Mi",
                "  defaults:\n    heapCeiling: 64Mi\n    limitMargin: \"0\"\n    maxStepPercent: 300\n  rollout:\n    approval: Automatic\n"))
        .create();
    awaitPool(
        OOM_NS,
        "printing",
        ROLLED,
        () -> {
          var a =
              client
                  .apps()
                  .deployments()
                  .inNamespace(OOM_NS)
                  .withName("manifest-printer")
                  .get()
                  .getMetadata()
                  .getAnnotations();
          return a != null && a.containsKey(Annotations.ROLLED_BACK);
        });
    HeapPool p = heapPool(OOM_NS, "printing");
    assertThat(p.getStatus().history)
        .anySatisfy(
            a -> {
              assertThat(a.action).isEqualTo("RolloutRolledBack");
              assertThat(a.message).contains("OOMKilled");
            });
    Deployment d =
        client.apps().deployments().inNamespace(OOM_NS).withName("manifest-printer").get();
    assertThat(options(d)).startsWith("-Xmx128m");
    assertThat(client.v1().events().inNamespace(OOM_NS).list().getItems())
        .anySatisfy(e -> assertThat(e.getReason()).isEqualTo("RolloutRolledBack"));
    // Its only workload is held now, so there is nothing to plan; the condition says why.
    awaitPool(
        OOM_NS,
        "printing",
        ROLLED,
        () -> {
          Condition c = condition(heapPool(OOM_NS, "printing"), "ProposalReady");
          return c.getStatus().equals("False")
              && c.getMessage().contains("manifest-printer (rolled back");
        });
  }

  // --- set-up ---

  private static void installChart() throws Exception {
    for (Path file : Files.newDirectoryStream(Chart.DIR.resolve("crds"))) {
      ControlPlane.installCrd(client, file);
    }
    client
        .namespaces()
        .resource(
            new NamespaceBuilder()
                .withNewMetadata()
                .withName(Chart.NAMESPACE)
                .endMetadata()
                .build())
        .create();
    List<HasMetadata> objects =
        Chart.render(
            Map.of(
                "prometheus.url", prometheus.uri().toString(),
                "metrics.bindAddress", "127.0.0.1",
                "measureEverySeconds", "5",
                // A leader and a standby, as an admin wanting a quick takeover runs them.
                "replicas", "2",
                // The least-privileged install: namespaced Roles only, no cluster-wide grant.
                "watchNamespaces[0]", WATCHED.get(0),
                "watchNamespaces[1]", WATCHED.get(1),
                "watchNamespaces[2]", WATCHED.get(2)));
    for (HasMetadata o : objects) {
      client.resource(o).create();
    }
    await()
        .atMost(Duration.ofMinutes(2))
        .ignoreExceptions()
        .until(
            () ->
                Objects.equals(
                    client
                        .apps()
                        .deployments()
                        .inNamespace(Chart.NAMESPACE)
                        .withName("heapherd")
                        .get()
                        .getStatus()
                        .getAvailableReplicas(),
                    2));
  }

  private static GenericKubernetesResource pool(
      String ns, String name, String mode, String budget, String extra) {
    String yaml =
        "apiVersion: heapherd.dev/v1alpha1\nkind: HeapPool\nmetadata:\n  name: "
            + name
            + "\n  namespace: "
            + ns
            + "\nspec:\n  mode: "
            + mode
            + "\n  memoryBudget: "
            + budget
            + "\n  selector:\n    matchLabels:\n      "
            + Fleet.POOL_LABEL
            + ": "
            + name
            + "\n  metrics:\n    windowSeconds: 60\n"
            // A floor well above every live set: the pool trades headroom, not survival.
            + (extra.isEmpty()
                ? "  defaults:\n    heapFloor: 128Mi\n    limitMargin: 128Mi\n"
                    + "    maxStepPercent: 300\n"
                : extra);
    return Serialization.unmarshal(yaml, GenericKubernetesResource.class);
  }

  // --- observations ---

  private static boolean allRunning(String ns) {
    List<Pod> pods = client.pods().inNamespace(ns).list().getItems();
    return !pods.isEmpty()
        && pods.stream()
            .allMatch(
                p ->
                    p.getStatus() != null
                        && p.getStatus().getConditions() != null
                        && p.getStatus().getConditions().stream()
                            .anyMatch(
                                c -> c.getType().equals("Ready") && c.getStatus().equals("True")));
  }

  /** The approved proposal's heaps are in every template and every rollout has finished. */
  private static boolean approvedProposalRunning() {
    HeapPool pool = heapPool(NS, POOL);
    if (pool == null || pool.getStatus() == null) {
      return false;
    }
    Condition rolling =
        pool.getStatus().conditions.stream()
            .filter(c -> c.getType().equals("RolloutInProgress"))
            .findFirst()
            .orElse(null);
    if (rolling == null || !"False".equals(rolling.getStatus())) {
      return false;
    }
    for (var w : approved.workloads) {
      Deployment d = client.apps().deployments().inNamespace(NS).withName(w.name).get();
      var a = d.getMetadata().getAnnotations();
      if (a != null && a.containsKey(Annotations.ROLLOUT)) {
        return false;
      }
      // A change under the threshold stays unrolled by design; the operator names it so.
      boolean skipped = rolling.getMessage().contains(w.name + ": BelowThreshold");
      if (!skipped
          && JvmOptions.maxHeapBytes(options(d)).orElse(0) != Quantity.parseBytes(w.proposedHeap)) {
        return false;
      }
      var s = d.getStatus();
      if (s == null
          || !Objects.equals(s.getUpdatedReplicas(), 1)
          || !Objects.equals(s.getAvailableReplicas(), 1)
          || !Objects.equals(s.getReplicas(), 1)) {
        return false;
      }
    }
    return true;
  }

  /** Waits for {@code done}; when it times out, the failure carries the pool's report. */
  private static void awaitPool(
      String ns, String name, Duration atMost, java.util.concurrent.Callable<Boolean> done) {
    try {
      await().atMost(atMost).pollInterval(Duration.ofSeconds(2)).until(done);
    } catch (ConditionTimeoutException e) {
      throw new AssertionError("not done within " + atMost + ":\n" + poolReport(ns, name), e);
    }
  }

  /**
   * What a failed wait needs to be understood: the pool's conditions and history, each workload.
   */
  private static String poolReport(String ns, String name) {
    StringBuilder text = new StringBuilder();
    HeapPool p = heapPool(ns, name);
    if (p != null && p.getStatus() != null) {
      p.getStatus()
          .conditions
          .forEach(
              c ->
                  text.append("condition ")
                      .append(c.getType())
                      .append('=')
                      .append(c.getStatus())
                      .append(' ')
                      .append(c.getReason())
                      .append(": ")
                      .append(c.getMessage())
                      .append('\n'));
      p.getStatus()
          .history
          .forEach(
              a ->
                  text.append("history ")
                      .append(a.time)
                      .append(' ')
                      .append(a.workload)
                      .append(' ')
                      .append(a.action)
                      .append(": ")
                      .append(a.message)
                      .append('\n'));
    }
    for (Deployment d : client.apps().deployments().inNamespace(ns).list().getItems()) {
      text.append("deployment ")
          .append(d.getMetadata().getName())
          .append(" options=")
          .append(options(d))
          .append(" annotations=")
          .append(d.getMetadata().getAnnotations())
          .append(" status=")
          .append(d.getStatus())
          .append('\n');
    }
    for (Pod pod : client.pods().inNamespace(ns).list().getItems()) {
      text.append("pod ")
          .append(pod.getMetadata().getName())
          .append(' ')
          .append(pod.getStatus() == null ? "" : pod.getStatus().getContainerStatuses())
          .append('\n');
    }
    // The operator pods' logs, as the node agent keeps them: the last lines of each.
    try (var files = Files.walk(work.resolve("agent"))) {
      for (Path log :
          files
              .filter(f -> f.getFileName().toString().endsWith(".log"))
              .filter(f -> f.getParent().getFileName().toString().contains("heapherd"))
              .toList()) {
        List<String> lines = Files.readAllLines(log);
        text.append("log ").append(log).append('\n');
        lines
            .subList(Math.max(0, lines.size() - OPERATOR_LOG_LINES), lines.size())
            .forEach(l -> text.append("  ").append(l).append('\n'));
      }
    } catch (java.io.IOException | java.io.UncheckedIOException e) {
      text.append("operator logs unreadable: ").append(e.getMessage()).append('\n');
    }
    return text.toString();
  }

  private static HeapPool heapPool(String ns, String name) {
    return client.resources(HeapPool.class).inNamespace(ns).withName(name).get();
  }

  private static Condition condition(HeapPool p, String type) {
    return p.getStatus().conditions.stream()
        .filter(c -> c.getType().equals(type))
        .findFirst()
        .orElseThrow();
  }

  private static String reason(HeapPool p, String type) {
    if (p == null || p.getStatus() == null) {
      return "";
    }
    return p.getStatus().conditions.stream()
        .filter(c -> c.getType().equals(type))
        .map(Condition::getReason)
        .findFirst()
        .orElse("");
  }

  private static int rolling(String ns) {
    return (int)
        client.apps().deployments().inNamespace(ns).list().getItems().stream()
            .filter(
                d ->
                    d.getMetadata().getAnnotations() != null
                        && d.getMetadata().getAnnotations().containsKey(Annotations.ROLLOUT))
            .count();
  }

  private static long replicaSets(String ns, String deployment) {
    return client
        .apps()
        .replicaSets()
        .inNamespace(ns)
        .withLabel("app", deployment)
        .list()
        .getItems()
        .size();
  }

  private static List<Pod> pods(String ns, String app) {
    return client.pods().inNamespace(ns).withLabel("app", app).list().getItems();
  }

  /** Memory limits of every container of every pod that exists, terminating ones included. */
  private static long podMemoryBytes(String ns) {
    return client.pods().inNamespace(ns).list().getItems().stream()
        .flatMap(p -> p.getSpec().getContainers().stream())
        .map(c -> c.getResources().getLimits().get("memory"))
        .filter(Objects::nonNull)
        .mapToLong(q -> q.getNumericalAmount().longValue())
        .sum();
  }

  /** The operator replica holding the leader-election Lease (its pod's name), or "". */
  private static String leader() {
    Lease lease =
        client
            .resources(Lease.class)
            .inNamespace(Chart.NAMESPACE)
            .withName(OperatorRuntime.LEASE_NAME)
            .get();
    return lease == null || lease.getSpec().getHolderIdentity() == null
        ? ""
        : lease.getSpec().getHolderIdentity();
  }

  /** The pid of the operator process of {@code pod}, from the node agent's container ID. */
  private static long operatorPid(String pod) {
    String id =
        client
            .pods()
            .inNamespace(Chart.NAMESPACE)
            .withName(pod)
            .get()
            .getStatus()
            .getContainerStatuses()
            .get(0)
            .getContainerID();
    return Long.parseLong(id.substring("pid://".length()));
  }

  private static String options(Deployment d) {
    return d.getSpec().getTemplate().getSpec().getContainers().get(0).getEnv().stream()
        .filter(e -> e.getName().equals("JAVA_TOOL_OPTIONS"))
        .findFirst()
        .orElseThrow()
        .getValue();
  }

  /** The synthetic workload's own account of its JVM, read from the port the agent gave it. */
  private static JsonNode truth(Pod pod) throws Exception {
    for (JsonNode group : JSON.readTree(agent.targets().toFile())) {
      if (pod.getMetadata().getName().equals(group.path("labels").path("pod").asText())) {
        String target = group.path("targets").get(0).asText();
        var response =
            HTTP.send(
                HttpRequest.newBuilder(URI.create("http://" + target + "/truth")).build(),
                HttpResponse.BodyHandlers.ofString());
        return JSON.readTree(response.body());
      }
    }
    throw new AssertionError(
        "pod " + pod.getMetadata().getName() + " is not in the agent's targets");
  }

  /**
   * The pool's measured GC time: pause seconds per second over the last {@link #GC_WINDOW_SECONDS}
   * of the pods running now, once each has run {@link #WARM_UP_SECONDS} longer than that.
   */
  private static double poolGcSecondsPerSecond() throws Exception {
    String pods =
        client.pods().inNamespace(NS).list().getItems().stream()
            .filter(p -> p.getMetadata().getDeletionTimestamp() == null)
            .map(p -> p.getMetadata().getName())
            .collect(java.util.stream.Collectors.joining("|"));
    String selector = "namespace=\"" + NS + "\",pod=~\"" + pods + "\"";
    // Each pod scraped for the warm-up and the window: the window then holds no JVM start-up
    // (class loading, building the live set), which collects more than the steady state.
    int scraped = WARM_UP_SECONDS + GC_WINDOW_SECONDS;
    await()
        .atMost(Duration.ofMinutes(4))
        .pollInterval(Duration.ofSeconds(5))
        .until(
            () ->
                query("min(count_over_time(up{" + selector + "}[" + scraped + "s]))")
                    >= scraped - SCRAPES_MISSED);
    return query(
        "sum(rate(jvm_gc_pause_seconds_sum{" + selector + "}[" + GC_WINDOW_SECONDS + "s]))");
  }

  /** One number from Prometheus' query API. */
  private static double query(String promql) throws Exception {
    var response =
        HTTP.send(
            HttpRequest.newBuilder(
                    prometheus
                        .uri()
                        .resolve(
                            "/api/v1/query?query="
                                + URLEncoder.encode(promql, StandardCharsets.UTF_8)))
                .build(),
            HttpResponse.BodyHandlers.ofString());
    JsonNode result = JSON.readTree(response.body()).path("data").path("result");
    assertThat(result).as(response.body()).hasSize(1);
    return Double.parseDouble(result.get(0).path("value").get(1).asText());
  }

  private static String kubectl(String... args) throws Exception {
    Path bin =
        Path.of(
            Objects.requireNonNull(
                System.getenv("HEAPHERD_CONTROL_PLANE_BIN"), "HEAPHERD_CONTROL_PLANE_BIN"));
    List<String> command =
        new java.util.ArrayList<>(
            List.of(bin.resolve("kubectl").toString(), "--kubeconfig=" + cluster.kubeconfig()));
    command.addAll(List.of(args));
    Process p = new ProcessBuilder(command).redirectErrorStream(true).start();
    String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
    assertThat(p.waitFor(30, TimeUnit.SECONDS)).isTrue();
    return out;
  }
}
