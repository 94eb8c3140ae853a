package dev.heapherd.nodeagent;

import io.fabric8.kubernetes.api.model.Node;
import io.fabric8.kubernetes.api.model.NodeBuilder;
import io.fabric8.kubernetes.api.model.NodeStatus;
import io.fabric8.kubernetes.api.model.NodeStatusBuilder;
import io.fabric8.kubernetes.api.model.Quantity;
import io.fabric8.kubernetes.api.model.coordination.v1.Lease;
import io.fabric8.kubernetes.api.model.coordination.v1.LeaseBuilder;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.KubernetesClientException;
import io.fabric8.kubernetes.client.dsl.base.PatchContext;
import io.fabric8.kubernetes.client.dsl.base.PatchType;
import java.net.HttpURLConnection;
import java.time.Instant;
import java.time.ZoneOffset;
import java.time.ZonedDateTime;
import java.time.temporal.ChronoUnit;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.Executors;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.TimeUnit;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The Node object for this agent, its Lease in kube-node-lease and the Ready heartbeat, as the
 * kubelet keeps them, so the node lifecycle controller sees a healthy node.
 */
final class NodeRegistration implements AutoCloseable {

  /** Where the kubelet keeps node leases. */
  static final String LEASE_NAMESPACE = "kube-node-lease";

  /** The kubelet's default nodeLeaseDurationSeconds. */
  static final int LEASE_SECONDS = 40;

  /**
   * Lease renewal and status heartbeat period: the kubelet renews at a quarter of the lease and
   * reports status every 10 s (nodeStatusUpdateFrequency).
   */
  static final long HEARTBEAT_SECONDS = 10;

  /** Annotations telling how this node enforces memory limits. */
  static final String MEMORY_ENFORCEMENT = "heapherd.dev/memory-enforcement";

  static final String MEMORY_ENFORCEMENT_DETAIL = "heapherd.dev/memory-enforcement-detail";

  private static final Logger LOG = LoggerFactory.getLogger(NodeRegistration.class);

  /** What the node offers and how it enforces memory. */
  record Description(
      String name, Quantity cpu, Quantity memory, int maxPods, MemoryEnforcement enforcement) {}

  private final KubernetesClient client;
  private final Description node;
  private final String readySince;
  private final ScheduledExecutorService heartbeat =
      Executors.newSingleThreadScheduledExecutor(Threads.daemon("heartbeat"));

  private NodeRegistration(KubernetesClient client, Description node) {
    this.client = client;
    this.node = node;
    this.readySince = ContainerWorker.timestamp(Instant.now());
  }

  /** Creates or adopts the Node, writes its status and Lease, and keeps both fresh. */
  static NodeRegistration register(KubernetesClient client, Description node) {
    NodeRegistration registration = new NodeRegistration(client, node);
    Node created = registration.createOrAdopt();
    registration.writeStatus();
    registration.renewLease(created.getMetadata().getUid());
    registration.heartbeat.scheduleWithFixedDelay(
        () -> registration.beat(created.getMetadata().getUid()),
        HEARTBEAT_SECONDS,
        HEARTBEAT_SECONDS,
        TimeUnit.SECONDS);
    LOG.info(
        "node {} registered: cpu {}, memory {}, pods {}; memory limits by {} ({})",
        node.name(),
        node.cpu(),
        node.memory(),
        node.maxPods(),
        node.enforcement().name(),
        node.enforcement().detail());
    return registration;
  }

  /** The labels the node carries; nodeSelectors are matched against them. */
  Map<String, String> labels() {
    Map<String, String> labels = new LinkedHashMap<>();
    labels.put("kubernetes.io/hostname", node.name());
    labels.put("kubernetes.io/os", "linux");
    labels.put("kubernetes.io/arch", architecture());
    return labels;
  }

  @Override
  public void close() {
    heartbeat.shutdownNow();
  }

  private Node createOrAdopt() {
    Map<String, String> annotations =
        Map.of(
            MEMORY_ENFORCEMENT, node.enforcement().name(),
            MEMORY_ENFORCEMENT_DETAIL, node.enforcement().detail());
    Node wanted =
        new NodeBuilder()
            .withNewMetadata()
            .withName(node.name())
            .withLabels(labels())
            .withAnnotations(annotations)
            .endMetadata()
            .withStatus(status())
            .build();
    try {
      return client.nodes().resource(wanted).create();
    } catch (KubernetesClientException e) {
      if (e.getCode() != HttpURLConnection.HTTP_CONFLICT) {
        throw e;
      }
      // A Node of this name exists (an agent ran before under it): take it over.
      return client
          .nodes()
          .withName(node.name())
          .edit(
              existing -> {
                Map<String, String> labels =
                    new LinkedHashMap<>(orEmpty(existing.getMetadata().getLabels()));
                labels.putAll(labels());
                Map<String, String> merged =
                    new LinkedHashMap<>(orEmpty(existing.getMetadata().getAnnotations()));
                merged.putAll(annotations);
                existing.getMetadata().setLabels(labels);
                existing.getMetadata().setAnnotations(merged);
                return existing;
              });
    }
  }

  private void beat(String nodeUid) {
    try {
      writeStatus();
      renewLease(nodeUid);
    } catch (KubernetesClientException e) {
      LOG.warn("node {} heartbeat failed: {}", node.name(), e.getMessage());
    }
  }

  private NodeStatus status() {
    String now = ContainerWorker.timestamp(Instant.now());
    Map<String, Quantity> capacity =
        Map.of(
            "cpu", node.cpu(),
            "memory", node.memory(),
            "pods", new Quantity(Integer.toString(node.maxPods())));
    return new NodeStatusBuilder()
        .withCapacity(capacity)
        .withAllocatable(capacity)
        .addNewCondition()
        .withType("Ready")
        .withStatus("True")
        .withReason("NodeAgentReady")
        .withMessage("heapherd node agent is running pods as local processes")
        .withLastHeartbeatTime(now)
        .withLastTransitionTime(readySince)
        .endCondition()
        .addNewAddress()
        .withType("InternalIP")
        .withAddress(ContainerLaunch.LOOPBACK)
        .endAddress()
        .addNewAddress()
        .withType("Hostname")
        .withAddress(node.name())
        .endAddress()
        .withNewNodeInfo()
        .withOperatingSystem("linux")
        .withArchitecture(architecture())
        .withKernelVersion(System.getProperty("os.version"))
        .withContainerRuntimeVersion(ContainerWorker.CONTAINER_ID_PREFIX + "local-process")
        .endNodeInfo()
        .build();
  }

  private void writeStatus() {
    String patch =
        client
            .getKubernetesSerialization()
            .asJson(List.of(Map.of("op", "add", "path", "/status", "value", status())));
    client
        .nodes()
        .withName(node.name())
        .subresource("status")
        .patch(PatchContext.of(PatchType.JSON), patch);
  }

  private void renewLease(String nodeUid) {
    ZonedDateTime now = ZonedDateTime.now(ZoneOffset.UTC).truncatedTo(ChronoUnit.MICROS);
    Lease lease =
        new LeaseBuilder()
            .withNewMetadata()
            .withName(node.name())
            .withNamespace(LEASE_NAMESPACE)
            // Owned by the Node, as the kubelet does, so deleting the Node removes the Lease.
            .addNewOwnerReference()
            .withApiVersion("v1")
            .withKind("Node")
            .withName(node.name())
            .withUid(nodeUid)
            .endOwnerReference()
            .endMetadata()
            .withNewSpec()
            .withHolderIdentity(node.name())
            .withLeaseDurationSeconds(LEASE_SECONDS)
            .withRenewTime(now)
            .endSpec()
            .build();
    Lease existing = client.leases().inNamespace(LEASE_NAMESPACE).withName(node.name()).get();
    if (existing == null) {
      client.leases().resource(lease).create();
      return;
    }
    client
        .leases()
        .inNamespace(LEASE_NAMESPACE)
        .withName(node.name())
        .edit(
            found -> {
              found.setSpec(lease.getSpec());
              found.getMetadata().setOwnerReferences(lease.getMetadata().getOwnerReferences());
              return found;
            });
  }

  private static Map<String, String> orEmpty(Map<String, String> map) {
    return map == null ? Map.of() : map;
  }

  /** The Kubernetes spelling of this machine's architecture. */
  private static String architecture() {
    String arch = System.getProperty("os.arch").toLowerCase(Locale.ROOT);
    return switch (arch) {
      case "x86_64", "amd64" -> "amd64";
      case "aarch64" -> "arm64";
      default -> arch;
    };
  }
}
