package dev.heapherd.nodeagent;

import static org.assertj.core.api.Assertions.assertThat;
import static org.awaitility.Awaitility.await;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.heapherd.harness.ControlPlane;
import dev.heapherd.harness.PrometheusServer;
import io.fabric8.kubernetes.api.model.ContainerState;
import io.fabric8.kubernetes.api.model.ContainerStatus;
import io.fabric8.kubernetes.api.model.EnvVar;
import io.fabric8.kubernetes.api.model.NamespaceBuilder;
import io.fabric8.kubernetes.api.model.Node;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.PodBuilder;
import io.fabric8.kubernetes.api.model.PodCondition;
import io.fabric8.kubernetes.api.model.Quantity;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.apps.DeploymentBuilder;
import io.fabric8.kubernetes.api.model.coordination.v1.Lease;
import io.fabric8.kubernetes.client.Config;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.KubernetesClientBuilder;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.ZonedDateTime;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The node agent on a real control plane (e2e/control-plane): a Deployment of the synthetic
 * workload runs as real JVMs that a real Prometheus scrapes, rolls when its heap flag changes, is
 * OOM-killed over its memory limit, and leaves no process behind when its namespace goes.
 */
class NodeAgentIT {

  /** Built by e2e/workload; failsafe passes the path. */
  private static final Path WORKLOAD_JAR =
      Path.of(System.getProperty("heapherd.workload.jar", "missing"));

  /** An image reference whose repository ends in synthetic-workload, so the agent runs the jar. */
  private static final String WORKLOAD_IMAGE = "registry.example/heapherd/synthetic-workload:test";

  private static final String NODE = "agent-it";
  private static final long MIB = 1024 * 1024;

  /** Short enough for several restarts within the test; the agent's default is 30 s. */
  private static final Duration MAX_BACK_OFF = Duration.ofSeconds(8);

  /** JVM start, a 16 MiB live set and a readiness probe every second: seconds each, on 2 cores. */
  private static final Duration POD_READY = Duration.ofSeconds(90);

  private static final ObjectMapper JSON = new ObjectMapper();
  private static final HttpClient HTTP = HttpClient.newHttpClient();

  private static Path work;
  private static ControlPlane controlPlane;
  private static NodeAgent agent;
  private static KubernetesClient client;
  private static PrometheusServer prometheus;
  private static Path fileSd;

  @BeforeAll
  static void start() throws Exception {
    assertThat(WORKLOAD_JAR).as("workload jar (mvn package in e2e/workload)").isRegularFile();
    // Under target/: logs stay for a look after a failure, and mvn clean removes them.
    Files.createDirectories(Path.of("target"));
    work = Files.createTempDirectory(Path.of("target").toAbsolutePath(), "node-agent-it");
    controlPlane = ControlPlane.start(work.resolve("control-plane"));
    fileSd = work.resolve("targets.json");
    agent =
        NodeAgent.start(
            new AgentSettings(
                controlPlane.kubeconfig(),
                NODE,
                work.resolve("agent"),
                Optional.of(fileSd),
                List.of(ImageMapping.workload(WORKLOAD_JAR)),
                AgentSettings.currentJava(),
                new Quantity("2"),
                new Quantity("4Gi"),
                20,
                MAX_BACK_OFF,
                Duration.ofSeconds(10),
                MemoryEnforcement.Mode.AUTO));
    client =
        new KubernetesClientBuilder()
            .withConfig(Config.fromKubeconfig(Files.readString(controlPlane.kubeconfig())))
            .build();
    prometheus = PrometheusServer.scraping(work.resolve("prometheus"), fileSd);
  }

  @AfterAll
  static void stop() throws Exception {
    try {
      if (agent != null) {
        agent.close();
        List<Long> left = new ArrayList<>();
        for (ProcessHandle process : agent.startedProcesses()) {
          if (process.isAlive()) {
            left.add(process.pid());
            process.destroyForcibly();
          }
        }
        assertThat(left).as("processes still running after the agent closed").isEmpty();
      }
    } finally {
      if (prometheus != null) {
        prometheus.close();
      }
      if (client != null) {
        client.close();
      }
      if (controlPlane != null) {
        controlPlane.close();
      }
    }
  }

  @Test
  void registersAReadyNodeWithALeaseAndItsMemoryEnforcement() {
    Node node = client.nodes().withName(NODE).get();

    assertThat(node.getStatus().getConditions())
        .anySatisfy(
            c -> {
              assertThat(c.getType()).isEqualTo("Ready");
              assertThat(c.getStatus()).isEqualTo("True");
            });
    assertThat(node.getStatus().getAddresses())
        .anySatisfy(
            a -> {
              assertThat(a.getType()).isEqualTo("InternalIP");
              assertThat(a.getAddress()).isEqualTo("127.0.0.1");
            });
    assertThat(node.getStatus().getCapacity())
        .containsEntry("memory", new Quantity("4Gi"))
        .containsEntry("pods", new Quantity("20"));
    assertThat(node.getMetadata().getAnnotations())
        .containsEntry(NodeRegistration.MEMORY_ENFORCEMENT, agent.memoryEnforcement());
    Lease lease =
        client.leases().inNamespace(NodeRegistration.LEASE_NAMESPACE).withName(NODE).get();
    assertThat(lease.getSpec().getHolderIdentity()).isEqualTo(NODE);
    assertThat(lease.getSpec().getRenewTime())
        .isAfter(ZonedDateTime.now().minusSeconds(NodeRegistration.LEASE_SECONDS));
  }

  @Test
  void runsADeploymentWithItsHeapAndRollsItWhenTheHeapChanges() throws Exception {
    String namespace = namespace("rollout");
    Deployment demo =
        client
            .apps()
            .deployments()
            .resource(workload(namespace, "demo", 2, "-Xmx96m", 16, "256Mi", true))
            .create();

    List<Pod> first = awaitReadyPods(namespace, "demo", 2);
    for (Pod pod : first) {
      assertThat(pod.getSpec().getNodeName()).isEqualTo(NODE);
      assertThat(pod.getStatus().getPodIP()).isEqualTo("127.0.0.1");
      assertThat(pod.getStatus().getHostIP()).isEqualTo("127.0.0.1");
      ContainerStatus app = pod.getStatus().getContainerStatuses().get(0);
      assertThat(app.getStarted()).isTrue();
      assertThat(app.getState().getRunning().getStartedAt()).isNotBlank();
      assertThat(app.getImageID()).startsWith("sha256:");
    }
    Map<String, JsonNode> targets = awaitTargets(namespace, 2);
    assertThat(targets.keySet())
        .containsExactlyInAnyOrderElementsOf(
            first.stream().map(p -> p.getMetadata().getName()).toList());
    for (Pod pod : first) {
      JsonNode target = targets.get(pod.getMetadata().getName());
      assertThat(target.path("labels").path("workload").asText()).isEqualTo("demo");
      assertThat(target.path("labels").path("workload_kind").asText()).isEqualTo("Deployment");
      JsonNode truth = truth(target);
      assertThat(truth.path("pid").asLong()).isEqualTo(pid(pod));
      assertMaxHeap(truth, 96);
    }
    // The scrape itself: Prometheus reads the list, reaches both JVMs and stores a GC metric of
    // each under its own pod label (Micrometer's JvmGcMetrics names it, see e2e/workload).
    await()
        .atMost(Duration.ofSeconds(30))
        .pollInterval(Duration.ofMillis(500))
        .until(
            () ->
                prometheus.scalar(
                        "count(count by (pod) (jvm_gc_memory_allocated_bytes_total{namespace=\""
                            + namespace
                            + "\",workload=\"demo\"}))")
                    == 2);

    client
        .apps()
        .deployments()
        .inNamespace(namespace)
        .withName("demo")
        .edit(
            d -> {
              d.getSpec().getTemplate().getSpec().getContainers().get(0).getEnv().stream()
                  .filter(e -> "JAVA_TOOL_OPTIONS".equals(e.getName()))
                  .forEach(e -> e.setValue("-Xmx128m"));
              return d;
            });

    await()
        .atMost(POD_READY.multipliedBy(2))
        .pollInterval(Duration.ofMillis(500))
        .untilAsserted(
            () -> {
              Deployment rolled =
                  client.apps().deployments().inNamespace(namespace).withName("demo").get();
              assertThat(rolled.getStatus().getObservedGeneration())
                  .isGreaterThan(demo.getMetadata().getGeneration());
              assertThat(rolled.getStatus().getUpdatedReplicas()).isEqualTo(2);
              assertThat(rolled.getStatus().getAvailableReplicas()).isEqualTo(2);
              assertThat(rolled.getStatus().getReplicas()).isEqualTo(2);
            });
    List<Pod> second = awaitReadyPods(namespace, "demo", 2);
    assertThat(second)
        .extracting(p -> p.getMetadata().getUid())
        .doesNotContainAnyElementsOf(first.stream().map(p -> p.getMetadata().getUid()).toList());
    Map<String, JsonNode> rolledTargets = awaitTargets(namespace, 2);
    for (Pod pod : second) {
      assertThat(heapFlag(pod)).isEqualTo("-Xmx128m");
      JsonNode truth = truth(rolledTargets.get(pod.getMetadata().getName()));
      assertThat(truth.path("pid").asLong()).isEqualTo(pid(pod));
      assertMaxHeap(truth, 128);
    }
    awaitGone(first.stream().map(NodeAgentIT::pid).toList());
  }

  @Test
  void killsAContainerOverItsMemoryLimitAndRestartsItWithBackOff() {
    String namespace = namespace("oom");
    // A 64 MiB live set cannot fit 80 MiB with the JVM's own memory on top.
    client
        .apps()
        .deployments()
        .resource(workload(namespace, "hog", 1, "-Xmx128m", 64, "80Mi", true))
        .create();

    Set<String> waitingReasons = new HashSet<>();
    await()
        .atMost(Duration.ofSeconds(60))
        .pollInterval(Duration.ofMillis(100))
        .untilAsserted(
            () -> {
              List<Pod> pods = pods(namespace, "hog");
              assertThat(pods).hasSize(1);
              ContainerStatus app = containerStatus(pods.get(0));
              Optional.ofNullable(app.getState().getWaiting())
                  .ifPresent(w -> waitingReasons.add(w.getReason()));
              assertThat(app.getRestartCount()).isGreaterThanOrEqualTo(2);
              ContainerState last = app.getLastState();
              assertThat(last.getTerminated().getReason()).isEqualTo("OOMKilled");
              assertThat(last.getTerminated().getExitCode()).isEqualTo(137);
              assertThat(waitingReasons).contains("CrashLoopBackOff");
              assertThat(pods.get(0).getStatus().getPhase()).isEqualTo("Running");
            });
  }

  @Test
  void anImageWithoutAJarWaitsWithAClearReason() {
    String namespace = namespace("unknown");
    client
        .pods()
        .resource(
            new PodBuilder()
                .withNewMetadata()
                .withName("shell")
                .withNamespace(namespace)
                .endMetadata()
                .withNewSpec()
                .addNewContainer()
                .withName("sh")
                .withImage("busybox:1.36")
                .endContainer()
                .endSpec()
                .build())
        .create();

    await()
        .atMost(Duration.ofSeconds(30))
        .pollInterval(Duration.ofMillis(200))
        .untilAsserted(
            () -> {
              Pod pod = client.pods().inNamespace(namespace).withName("shell").get();
              assertThat(pod.getSpec().getNodeName()).isEqualTo(NODE);
              assertThat(pod.getStatus().getPhase()).isEqualTo("Pending");
              ContainerState state = containerStatus(pod).getState();
              assertThat(state.getWaiting().getReason()).isEqualTo("ImageNotRunnable");
              assertThat(state.getWaiting().getMessage())
                  .startsWith("nothing is mapped to image busybox:1.36");
            });
  }

  @Test
  void deletingTheNamespaceStopsEveryProcessOfIt() throws Exception {
    String namespace = namespace("cleanup");
    client
        .apps()
        .deployments()
        .resource(workload(namespace, "short", 2, "-Xmx64m", 8, "256Mi", false))
        .create();
    List<Long> pids = awaitReadyPods(namespace, "short", 2).stream().map(NodeAgentIT::pid).toList();
    assertThat(pids).allSatisfy(pid -> assertThat(ProcessHandle.of(pid)).isPresent());

    client.namespaces().withName(namespace).delete();

    await()
        .atMost(Duration.ofSeconds(90))
        .pollInterval(Duration.ofMillis(500))
        .until(() -> client.namespaces().withName(namespace).get() == null);
    awaitGone(pids);
    assertThat(targets(namespace)).isEmpty();
  }

  /** A namespace whose default service account exists, so pods are admitted at once. */
  private static String namespace(String name) {
    client
        .namespaces()
        .resource(new NamespaceBuilder().withNewMetadata().withName(name).endMetadata().build())
        .create();
    await()
        .atMost(Duration.ofSeconds(30))
        .pollInterval(Duration.ofMillis(100))
        .until(() -> client.serviceAccounts().inNamespace(name).withName("default").get() != null);
    return name;
  }

  /**
   * The synthetic workload with a small live set and a slow turnover; with {@code probe} a
   * readiness probe on /ready (which the agent runs against the pod's port), without it the agent's
   * own check of the image's ready path.
   */
  private static Deployment workload(
      String namespace,
      String name,
      int replicas,
      String heapFlag,
      int liveMib,
      String limit,
      boolean probe) {
    DeploymentBuilder deployment =
        new DeploymentBuilder()
            .withNewMetadata()
            .withName(name)
            .withNamespace(namespace)
            .endMetadata()
            .withNewSpec()
            .withReplicas(replicas)
            .withNewSelector()
            .addToMatchLabels("app", name)
            .endSelector()
            .withNewTemplate()
            .withNewMetadata()
            .addToLabels("app", name)
            .endMetadata()
            .withNewSpec()
            .withTerminationGracePeriodSeconds(5L)
            .addNewContainer()
            .withName("app")
            .withImage(WORKLOAD_IMAGE)
            .withArgs("--garbage-mib-per-second", "4")
            .addNewEnv()
            .withName("JAVA_TOOL_OPTIONS")
            .withValue(heapFlag)
            .endEnv()
            .addNewEnv()
            .withName("WORKLOAD_LIVE_MIB")
            .withValue(Integer.toString(liveMib))
            .endEnv()
            .addNewEnv()
            .withName("WORKLOAD_REPLACE_MIB_PER_SECOND")
            .withValue("0.5")
            .endEnv()
            .withNewResources()
            .addToLimits("memory", new Quantity(limit))
            .endResources()
            .endContainer()
            .endSpec()
            .endTemplate()
            .endSpec();
    if (probe) {
      deployment
          .editSpec()
          .editTemplate()
          .editSpec()
          .editFirstContainer()
          .withNewReadinessProbe()
          .withNewHttpGet()
          .withPath("/ready")
          .withNewPort(8080)
          .endHttpGet()
          .withPeriodSeconds(1)
          .endReadinessProbe()
          .endContainer()
          .endSpec()
          .endTemplate()
          .endSpec();
    }
    return deployment.build();
  }

  private static List<Pod> pods(String namespace, String app) {
    return client.pods().inNamespace(namespace).withLabel("app", app).list().getItems();
  }

  /** Waits for exactly {@code count} Running, Ready pods of {@code app}, none terminating. */
  private static List<Pod> awaitReadyPods(String namespace, String app, int count) {
    List<Pod> ready = new ArrayList<>();
    await()
        .atMost(POD_READY)
        .pollInterval(Duration.ofMillis(250))
        .untilAsserted(
            () -> {
              List<Pod> pods = pods(namespace, app);
              assertThat(pods).hasSize(count);
              for (Pod pod : pods) {
                assertThat(pod.getMetadata().getDeletionTimestamp()).isNull();
                assertThat(pod.getStatus().getPhase()).isEqualTo("Running");
                assertThat(pod.getStatus().getConditions())
                    .filteredOn(c -> "Ready".equals(c.getType()))
                    .extracting(PodCondition::getStatus)
                    .containsExactly("True");
              }
              ready.clear();
              ready.addAll(pods);
            });
    return ready;
  }

  /** The pod's one container status, asserted present so waits retry until it is written. */
  private static ContainerStatus containerStatus(Pod pod) {
    assertThat(pod.getStatus().getContainerStatuses()).as("container statuses").hasSize(1);
    return pod.getStatus().getContainerStatuses().get(0);
  }

  /** The process behind a pod's container, from the agent's {@code pid://<pid>} container ID. */
  private static long pid(Pod pod) {
    String id = containerStatus(pod).getContainerID();
    assertThat(id).startsWith(ContainerWorker.CONTAINER_ID_PREFIX);
    return Long.parseLong(id.substring(ContainerWorker.CONTAINER_ID_PREFIX.length()));
  }

  private static String heapFlag(Pod pod) {
    return pod.getSpec().getContainers().get(0).getEnv().stream()
        .filter(e -> "JAVA_TOOL_OPTIONS".equals(e.getName()))
        .map(EnvVar::getValue)
        .findFirst()
        .orElseThrow();
  }

  /** The file_sd entries of {@code namespace}, by pod name. */
  private static Map<String, JsonNode> targets(String namespace) throws IOException {
    Map<String, JsonNode> byPod = new java.util.HashMap<>();
    for (JsonNode group : JSON.readTree(fileSd.toFile())) {
      if (namespace.equals(group.path("labels").path("namespace").asText())) {
        byPod.put(group.path("labels").path("pod").asText(), group);
      }
    }
    return byPod;
  }

  private static Map<String, JsonNode> awaitTargets(String namespace, int count) {
    Map<String, JsonNode> found = new java.util.HashMap<>();
    await()
        .atMost(Duration.ofSeconds(10))
        .pollInterval(Duration.ofMillis(200))
        .untilAsserted(
            () -> {
              Map<String, JsonNode> now = targets(namespace);
              assertThat(now).hasSize(count);
              found.clear();
              found.putAll(now);
            });
    return found;
  }

  /** The workload's own account of itself, from the target's /truth. */
  private static JsonNode truth(JsonNode target) throws IOException, InterruptedException {
    String hostPort = target.path("targets").get(0).asText();
    HttpResponse<String> response =
        HTTP.send(
            HttpRequest.newBuilder(URI.create("http://" + hostPort + "/truth"))
                .timeout(Duration.ofSeconds(5))
                .build(),
            HttpResponse.BodyHandlers.ofString());
    assertThat(response.statusCode()).isEqualTo(200);
    return JSON.readTree(response.body());
  }

  /**
   * Runtime.maxMemory() is -Xmx under G1 (the default on 2 or more cores) and -Xmx less one
   * survivor space under the serial collector, so a tenth below the flag is allowed.
   */
  private static void assertMaxHeap(JsonNode truth, long xmxMib) {
    assertThat(truth.path("maxHeapBytes").asLong()).isBetween(xmxMib * MIB * 9 / 10, xmxMib * MIB);
  }

  private static void awaitGone(List<Long> pids) {
    await()
        .atMost(Duration.ofSeconds(30))
        .pollInterval(Duration.ofMillis(200))
        .untilAsserted(
            () ->
                assertThat(pids)
                    .allSatisfy(
                        pid ->
                            assertThat(ProcessHandle.of(pid).filter(ProcessHandle::isAlive))
                                .as("pid %d", pid)
                                .isEmpty()));
  }
}
