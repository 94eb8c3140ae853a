package dev.heapherd.reconcile;

import static dev.heapherd.reconcile.FakeMetrics.jvm;
import static org.assertj.core.api.Assertions.assertThat;
import static org.awaitility.Awaitility.await;

import dev.heapherd.api.HeapPool;
import dev.heapherd.input.Quantity;
import dev.heapherd.rollout.Annotations;
import dev.heapherd.rollout.JvmOptions;
import io.fabric8.kubernetes.api.model.Condition;
import io.fabric8.kubernetes.api.model.Event;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.server.mock.EnableKubernetesMockClient;
import io.fabric8.kubernetes.client.server.mock.KubernetesMockServer;
import io.fabric8.mockwebserver.http.RecordedRequest;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;
import java.util.UUID;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;

/**
 * The reconciler against Fabric8's mock API server in CRUD mode. Larkspur Grocers (a fictional
 * chain) runs three order services in one namespace; the test plays the Deployment controller.
 */
@EnableKubernetesMockClient(crud = true)
class HeapPoolReconcilerIT {

  static KubernetesMockServer server;
  static KubernetesClient client;

  private static final Map<String, String> POOL_LABELS = Map.of("heapherd.dev/pool", "orders");
  private static final Duration WAIT = Duration.ofSeconds(30);

  private final FakeMetrics metrics = new FakeMetrics();
  private OperatorHarness operator;
  private String ns;
  private FakeWorkloadController controller;

  @BeforeEach
  void setUp() throws Exception {
    OperatorHarness.installCrd(client);
    ns = "larkspur-" + UUID.randomUUID().toString().substring(0, 6);
    controller = new FakeWorkloadController(client, ns);
    // stock-ledger: big and quiet (donor); price-engine: small and busy (receiver).
    create(OperatorHarness.deployment(ns, "stock-ledger", 2, 1024, 1400, POOL_LABELS));
    create(OperatorHarness.deployment(ns, "price-engine", 2, 512, 800, POOL_LABELS));
    create(OperatorHarness.deployment(ns, "basket-service", 2, 768, 1100, POOL_LABELS));
    metrics.set(
        List.of(
            jvm("stock-ledger", 2, 1024, 300, 0.3),
            jvm("price-engine", 2, 512, 350, 9.0),
            jvm("basket-service", 2, 768, 400, 2.0)));
  }

  /**
   * Every request the operator's own client sent during this class (the test's client sends with
   * another user agent) is allowed by the chart's RBAC rules.
   */
  @AfterAll
  static void everyApiCallIsCoveredByTheChartsRules() throws Exception {
    Set<ApiCalls.Call> calls =
        new TreeSet<>(java.util.Comparator.comparing(ApiCalls.Call::toString));
    RecordedRequest r;
    while ((r = server.takeRequest(1, TimeUnit.MILLISECONDS)) != null) {
      if (OperatorHarness.USER_AGENT.equals(r.getHeader("User-Agent"))) {
        calls.add(ApiCalls.of(r));
      }
    }
    assertThat(calls)
        .extracting(ApiCalls.Call::toString)
        .contains(
            "update apps/deployments",
            "patch heapherd.dev/heappools/status",
            "create core/events",
            "watch core/pods",
            "patch coordination.k8s.io/leases");
    var rules = new java.util.ArrayList<>(ApiCalls.chartRules());
    // Every authenticated user may review its own rights (the built-in system:basic-user role).
    rules.add(
        new ApiCalls.Rule(
            List.of("authorization.k8s.io"),
            List.of("selfsubjectrulesreviews"),
            List.of("create")));
    assertThat(calls)
        .as("helm/heapherd/files/operator-rules.yaml must allow every call")
        .allSatisfy(c -> assertThat(rules).anyMatch(rule -> rule.allows(c)));
  }

  @AfterEach
  void tearDown() {
    if (operator != null) {
      operator.close();
    }
  }

  @Test
  void dryRunPublishesAProposalAndTouchesNothing() {
    Map<String, String> before = versions();
    start();
    createPool("DryRun", "memoryBudget: 8Gi");
    HeapPool pool = awaitReady("DryRun");
    assertThat(pool.getStatus().proposal.hash).matches("[0-9a-f]{16}");
    assertThat(pool.getStatus().proposal.workloads).hasSize(3);
    assertThat(pool.getStatus().observedGeneration).isEqualTo(pool.getMetadata().getGeneration());
    assertThat(condition(pool, "RolloutInProgress").getReason()).isEqualTo("DryRun");
    assertThat(versions()).isEqualTo(before);
    assertThat(events()).extracting(Event::getReason).contains("ProposalComputed");
    // The status links the pool's review page, which the operator serves.
    assertThat(pool.getStatus().reviewPage).isEqualTo("/pools/" + ns + "/orders");
    assertThat(operator.reviewPage(pool.getStatus().reviewPage))
        .hasValueSatisfying(
            page ->
                assertThat(page).contains("data-workload=\"price-engine\"").contains("Caution"));
    // The operator SDK's meters are in the same registry as heapherd's own.
    assertThat(operator.registry.getMeters())
        .extracting(m -> m.getId().getName())
        .anyMatch(n -> n.startsWith("operator.sdk."))
        .anyMatch(n -> n.startsWith("heapherd."));
  }

  @Test
  void manualApprovalRollsOneWorkloadAtATimeWithinTheBudget() {
    start();
    createPool("Apply", "memoryBudget: 8Gi");
    HeapPool pool = awaitReady("AwaitingApproval");
    Map<String, String> before = versions();
    String hash = pool.getStatus().proposal.hash;
    long budget = Quantity.parseBytes("8Gi");

    approve(hash);
    List<String> order = new ArrayList<>();
    List<Long> samples = new ArrayList<>();
    samples.add(controller.podMemoryBytes());
    for (int round = 0; round < 3; round++) {
      await().atMost(WAIT).until(() -> !rolling().isEmpty() || readyReason().equals("InSync"));
      if (readyReason().equals("InSync")) {
        break;
      }
      List<String> rolling = rolling();
      assertThat(rolling).as("one workload rolls at a time").hasSize(1);
      String name = rolling.get(0);
      order.add(name);
      controller.roll(name, 1, samples::add);
      await().atMost(WAIT).until(() -> !rolling().contains(name));
      // The changed workload now measures differently; the approved proposal still applies.
      metrics.set(
          List.of(
              jvm("stock-ledger", 2, 700, 300, 0.6),
              jvm("price-engine", 2, 512, 350, 9.0),
              jvm("basket-service", 2, 768, 400, 2.0)));
    }
    await().atMost(WAIT).until(() -> readyReason().equals("InSync"));
    assertThat(order).as("the donor shrinks first").startsWith("stock-ledger").hasSize(3);
    assertThat(samples)
        .as("surge pods ran beside old ones")
        .anySatisfy(s -> assertThat(s).isGreaterThan(samples.get(0)));
    assertThat(samples).allSatisfy(s -> assertThat(s).isLessThanOrEqualTo(budget));
    HeapPool done = pool();
    for (var w : done.getStatus().proposal.workloads) {
      Deployment d = client.apps().deployments().inNamespace(ns).withName(w.name).get();
      String options =
          d.getSpec().getTemplate().getSpec().getContainers().get(0).getEnv().get(0).getValue();
      assertThat(JvmOptions.maxHeapBytes(options)).hasValue(Quantity.parseBytes(w.proposedHeap));
      assertThat(options).contains("-XX:+UseG1GC -Dfile.encoding=UTF-8");
      assertThat(
              d.getSpec()
                  .getTemplate()
                  .getSpec()
                  .getContainers()
                  .get(0)
                  .getResources()
                  .getLimits()
                  .get("memory")
                  .getNumericalAmount()
                  .longValue())
          .isEqualTo(Quantity.parseBytes(w.proposedLimit));
    }
    assertThat(done.getStatus().proposal.hash).isEqualTo(hash);
    assertThat(done.getStatus().history)
        .extracting(a -> a.action)
        .contains("HeapLowered", "RolloutFinished");
    assertThat(versions()).isNotEqualTo(before);
  }

  @Test
  void anOomKilledPodRollsTheWorkloadBackAndMarksIt() {
    start();
    createPool("Apply", "memoryBudget: 8Gi\n  rollout:\n    approval: Automatic");
    await().atMost(WAIT).until(() -> rolling().size() == 1);
    String name = rolling().get(0);
    Deployment changed = deployment(name);
    assertThat(changed.getMetadata().getAnnotations()).containsKey(Annotations.ROLLOUT);
    String original =
        "-Xmx"
            + Map.of("stock-ledger", 1024, "price-engine", 512, "basket-service", 768).get(name)
            + "m";

    controller.oomKillNewPod(name);
    await()
        .atMost(WAIT)
        .until(
            () ->
                deployment(name)
                    .getMetadata()
                    .getAnnotations()
                    .containsKey(Annotations.ROLLED_BACK));
    Deployment restored = deployment(name);
    // The record stays, marked, while the pods return to the previous values.
    assertThat(restored.getMetadata().getAnnotations().get(Annotations.ROLLOUT))
        .contains("\"rollingBack\":true");
    String options =
        restored
            .getSpec()
            .getTemplate()
            .getSpec()
            .getContainers()
            .get(0)
            .getEnv()
            .get(0)
            .getValue();
    assertThat(options).isEqualTo(original + " -XX:+UseG1GC -Dfile.encoding=UTF-8");
    assertThat(events()).extracting(Event::getReason).contains("RolloutRolledBack");
    controller.settle(name);
    await()
        .atMost(WAIT)
        .until(
            () ->
                !deployment(name).getMetadata().getAnnotations().containsKey(Annotations.ROLLOUT));
    await()
        .atMost(WAIT)
        .until(() -> pool().getStatus().proposal.held.stream().anyMatch(h -> h.name.equals(name)));
    assertThat(pool().getStatus().history)
        .extracting(a -> a.action)
        .contains("RolloutRolledBack", "RollbackFinished");
    assertThat(rolling()).as("the rolled-back workload is not retried").doesNotContain(name);
  }

  @Test
  void staleMetricsHoldEveryChange() {
    metrics.age(7200);
    Map<String, String> before = versions();
    start();
    createPool("Apply", "memoryBudget: 8Gi\n  rollout:\n    approval: Automatic");
    await().atMost(WAIT).until(() -> readyReason().equals("MetricsUnavailable"));
    assertThat(condition(pool(), "MetricsAvailable").getReason()).isEqualTo("MetricsStale");
    assertThat(versions()).isEqualTo(before);
  }

  @Test
  void optedOutWorkloadsAreNeverChanged() {
    Deployment d = deployment("stock-ledger");
    d.getMetadata().setAnnotations(Map.of(Annotations.OPT_OUT, "true"));
    client.resource(d).update();
    String version = deployment("stock-ledger").getMetadata().getResourceVersion();
    start();
    createPool("Apply", "memoryBudget: 8Gi\n  rollout:\n    approval: Automatic");
    for (int round = 0; round < 2; round++) {
      await().atMost(WAIT).until(() -> !rolling().isEmpty() || readyReason().equals("InSync"));
      rolling().forEach(n -> controller.roll(n, 1, s -> {}));
    }
    assertThat(pool().getStatus().proposal.held).extracting(h -> h.name).contains("stock-ledger");
    assertThat(deployment("stock-ledger").getMetadata().getResourceVersion()).isEqualTo(version);
  }

  @Test
  void workloadsOfOtherNamespacesAreNeverTouched() {
    String other = ns + "-other";
    create(OperatorHarness.deployment(other, "stock-ledger", 2, 1024, 1400, POOL_LABELS));
    String version =
        client
            .apps()
            .deployments()
            .inNamespace(other)
            .withName("stock-ledger")
            .get()
            .getMetadata()
            .getResourceVersion();
    start();
    createPool("Apply", "memoryBudget: 8Gi\n  rollout:\n    approval: Automatic");
    await().atMost(WAIT).until(() -> rolling().size() == 1);
    controller.roll(rolling().get(0), 1, s -> {});
    await()
        .atMost(WAIT)
        .until(
            () ->
                pool().getStatus().history.stream()
                    .anyMatch(a -> a.action.equals("RolloutFinished")));
    assertThat(
            client
                .apps()
                .deployments()
                .inNamespace(other)
                .withName("stock-ledger")
                .get()
                .getMetadata()
                .getResourceVersion())
        .isEqualTo(version);
  }

  @Test
  void aRestartMidRolloutFinishesWithoutASecondChange() {
    start();
    createPool("Apply", "memoryBudget: 8Gi\n  rollout:\n    approval: Automatic");
    await().atMost(WAIT).until(() -> rolling().size() == 1);
    String name = rolling().get(0);
    String written =
        deployment(name)
            .getSpec()
            .getTemplate()
            .getSpec()
            .getContainers()
            .get(0)
            .getEnv()
            .get(0)
            .getValue();
    // The workload is written before the pool's status; stop once both are, as a crash would.
    await()
        .atMost(WAIT)
        .until(
            () ->
                pool().getStatus().history.stream()
                    .anyMatch(a -> a.workload.equals(name) && a.action.startsWith("Heap")));
    operator.close();
    operator = null;

    controller.roll(name, 1, s -> {});
    start();
    await()
        .atMost(WAIT)
        .until(
            () ->
                deployment(name)
                    .getMetadata()
                    .getAnnotations()
                    .containsKey(Annotations.CHANGED_AT));
    assertThat(
            deployment(name)
                .getSpec()
                .getTemplate()
                .getSpec()
                .getContainers()
                .get(0)
                .getEnv()
                .get(0)
                .getValue())
        .isEqualTo(written);
    long starts =
        pool().getStatus().history.stream()
            .filter(a -> a.workload.equals(name))
            .filter(a -> a.action.startsWith("Heap"))
            .count();
    assertThat(starts).isEqualTo(1);
  }

  @Test
  void aConflictOnWriteIsRetried() {
    server
        .expect()
        .put()
        .withPath("/apis/apps/v1/namespaces/" + ns + "/deployments/stock-ledger")
        .andReturn(
            409,
            new io.fabric8.kubernetes.api.model.StatusBuilder()
                .withCode(409)
                .withReason("Conflict")
                .withMessage("the object has been modified")
                .build())
        .once();
    start();
    createPool("Apply", "memoryBudget: 8Gi\n  rollout:\n    approval: Automatic");
    await()
        .atMost(WAIT)
        .until(
            () ->
                deployment("stock-ledger").getMetadata().getAnnotations() != null
                    && deployment("stock-ledger")
                        .getMetadata()
                        .getAnnotations()
                        .containsKey(Annotations.ROLLOUT));
  }

  @Test
  void twoPoolsSelectingOneWorkloadBothStop() {
    Map<String, String> before = versions();
    createPool("orders", "Apply", "memoryBudget: 8Gi\n  rollout:\n    approval: Automatic");
    createPool("orders-copy", "Apply", "memoryBudget: 8Gi\n  rollout:\n    approval: Automatic");
    start();
    await().atMost(WAIT).until(() -> degradedReason("orders").equals("WorkloadInTwoPools"));
    await().atMost(WAIT).until(() -> degradedReason("orders-copy").equals("WorkloadInTwoPools"));
    assertThat(condition(pool("orders"), "Degraded").getMessage())
        .contains("stock-ledger (also in pool orders-copy)");
    assertThat(versions()).isEqualTo(before);
  }

  @Test
  void jvmOptionsTheJvmWouldRefuseStopThePoolAndNothingIsPatched() {
    // HotSpot refuses an unmatched quote in JAVA_TOOL_OPTIONS at start-up (JvmOptionsJvmIT):
    // rewriting the heap there would roll out pods that never start.
    Deployment d = deployment("price-engine");
    d.getSpec()
        .getTemplate()
        .getSpec()
        .getContainers()
        .get(0)
        .getEnv()
        .get(0)
        .setValue("-Xmx512m \"-Dlarkspur.zone=eu");
    client.resource(d).update();
    Map<String, String> before = versions();
    start();
    createPool("Apply", "memoryBudget: 8Gi\n  rollout:\n    approval: Automatic");
    await().atMost(WAIT).until(() -> degradedReason("orders").equals("WorkloadNotChangeable"));
    assertThat(condition(pool(), "Degraded").getMessage())
        .contains("Deployment price-engine")
        .containsIgnoringCase("quote");
    assertThat(versions()).isEqualTo(before);
  }

  @Test
  void anUnexpectedErrorIsReportedAsDegradedAndNothingIsPatched() {
    metrics.fail(new IllegalStateException("window\nends before it starts"));
    Map<String, String> before = versions();
    start();
    createPool("Apply", "memoryBudget: 8Gi\n  rollout:\n    approval: Automatic");
    await().atMost(WAIT).until(() -> degradedReason("orders").equals("UnexpectedError"));
    assertThat(condition(pool(), "Degraded").getMessage())
        .isEqualTo(
            "IllegalStateException: window\\nends before it starts;"
                + " the operator log has the details");
    assertThat(versions()).isEqualTo(before);
    // Once measuring works again, the next wake-up (any change to a workload) clears it.
    metrics.fail(null);
    Deployment touched = deployment("stock-ledger");
    touched.getMetadata().setAnnotations(Map.of("larkspur.example/touched", "yes"));
    client.resource(touched).update();
    await().atMost(WAIT).until(() -> degradedReason("orders").isEmpty());
  }

  @Test
  void badPoolsAreReportedAndNothingIsPatched() {
    Map<String, String> before = versions();
    start();
    String[][] cases = {
      {"memoryBudget: -1Gi", "InvalidSpec", "memoryBudget"},
      {
        "memoryBudget: 8Gi\n  rollout:\n    jvmOptionsVariable: \"JAVA OPTS\"",
        "InvalidSpec",
        "jvmOptionsVariable"
      },
      {
        "memoryBudget: 8Gi\n  rollout:\n    containerName: sidecar",
        "WorkloadNotChangeable",
        "no container named \"sidecar\""
      },
    };
    for (String[] c : cases) {
      String name = "bad-" + Integer.toHexString(c[0].hashCode());
      createPool(name, "Apply", c[0]);
      await().atMost(WAIT).until(() -> degradedReason(name).equals(c[1]));
      assertThat(condition(pool(name), "Degraded").getMessage()).contains(c[2]);
    }
    String mode = "unknown-mode";
    client
        .resource(
            OperatorHarness.pool(poolYaml(mode, "Sometimes", "memoryBudget: 8Gi", POOL_LABELS)))
        .create();
    await().atMost(WAIT).until(() -> degradedReason(mode).equals("InvalidSpec"));
    assertThat(condition(pool(mode), "Degraded").getMessage())
        .contains("spec.mode")
        .contains("Sometimes");
    String none = "selects-nothing";
    client
        .resource(
            OperatorHarness.pool(
                poolYaml(none, "Apply", "memoryBudget: 8Gi", Map.of("team", "nobody"))))
        .create();
    await().atMost(WAIT).until(() -> degradedReason(none).equals("NoWorkloads"));
    assertThat(versions()).isEqualTo(before);
  }

  private void start() {
    operator = new OperatorHarness(server, metrics);
  }

  private void create(Deployment d) {
    client.resource(d).create();
    new FakeWorkloadController(client, d.getMetadata().getNamespace())
        .settle(d.getMetadata().getName());
  }

  private void createPool(String mode, String objective) {
    createPool("orders", mode, objective);
  }

  private void createPool(String name, String mode, String objective) {
    client.resource(OperatorHarness.pool(poolYaml(name, mode, objective, POOL_LABELS))).create();
  }

  private String poolYaml(String name, String mode, String objective, Map<String, String> labels) {
    StringBuilder selector = new StringBuilder();
    labels.forEach(
        (k, v) -> selector.append("      ").append(k).append(": ").append(v).append('\n'));
    return "apiVersion: heapherd.dev/v1alpha1\nkind: HeapPool\nmetadata:\n  name: "
        + name
        + "\n  namespace: "
        + ns
        + "\nspec:\n  mode: "
        + mode
        + "\n  selector:\n    matchLabels:\n"
        + selector
        + "  defaults:\n    heapFloor: 256Mi\n  "
        + objective
        + "\n";
  }

  private void approve(String hash) {
    HeapPool p = pool();
    p.getSpec().approvedProposal = hash;
    client.resource(p).update();
  }

  private HeapPool awaitReady(String reason) {
    await().atMost(WAIT).until(() -> readyReason().equals(reason));
    return pool();
  }

  private String readyReason() {
    HeapPool p = pool();
    if (p == null || p.getStatus() == null) {
      return "";
    }
    return p.getStatus().conditions.stream()
        .filter(c -> c.getType().equals("Ready"))
        .map(Condition::getReason)
        .findFirst()
        .orElse("");
  }

  private String degradedReason(String name) {
    HeapPool p = pool(name);
    if (p == null || p.getStatus() == null) {
      return "";
    }
    return p.getStatus().conditions.stream()
        .filter(c -> c.getType().equals("Degraded") && c.getStatus().equals("True"))
        .map(Condition::getReason)
        .findFirst()
        .orElse("");
  }

  private List<String> rolling() {
    List<String> out = new ArrayList<>();
    for (Deployment d : client.apps().deployments().inNamespace(ns).list().getItems()) {
      var a = d.getMetadata().getAnnotations();
      if (a != null && a.containsKey(Annotations.ROLLOUT)) {
        out.add(d.getMetadata().getName());
      }
    }
    return out;
  }

  private HeapPool pool() {
    return pool("orders");
  }

  private HeapPool pool(String name) {
    return client.resources(HeapPool.class).inNamespace(ns).withName(name).get();
  }

  private Deployment deployment(String name) {
    return client.apps().deployments().inNamespace(ns).withName(name).get();
  }

  private Condition condition(HeapPool p, String type) {
    return p.getStatus().conditions.stream()
        .filter(c -> c.getType().equals(type))
        .findFirst()
        .orElseThrow();
  }

  /** What heapherd could change in each Deployment: its spec and annotations. */
  private Map<String, String> versions() {
    Map<String, String> out = new java.util.TreeMap<>();
    client
        .apps()
        .deployments()
        .inNamespace(ns)
        .list()
        .getItems()
        .forEach(d -> out.put(d.getMetadata().getName(), specAndAnnotations(d)));
    return out;
  }

  private static String specAndAnnotations(Deployment d) {
    return io.fabric8.kubernetes.client.utils.Serialization.asJson(d.getSpec())
        + d.getMetadata().getAnnotations();
  }

  private List<Event> events() {
    return client.v1().events().inNamespace(ns).list().getItems();
  }
}
