package dev.heapherd.nodeagent;

import io.fabric8.kubernetes.api.model.Container;
import io.fabric8.kubernetes.api.model.ContainerStatus;
import io.fabric8.kubernetes.api.model.ObjectMeta;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.PodCondition;
import io.fabric8.kubernetes.api.model.PodStatus;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.KubernetesClientException;
import io.fabric8.kubernetes.client.dsl.base.PatchContext;
import io.fabric8.kubernetes.client.dsl.base.PatchType;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.net.HttpURLConnection;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.Executor;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * A pod bound to this node: runs its containers, writes its status, and when it is deleted stops
 * its processes and removes it. Called from the agent's sync loop only.
 */
final class PodWorker {

  /** The API's default terminationGracePeriodSeconds, for pods that carry none. */
  private static final long DEFAULT_GRACE_SECONDS = 30;

  private static final Logger LOG = LoggerFactory.getLogger(PodWorker.class);

  private final KubernetesClient client;
  private final WorkerContext context;
  private final PortAllocator ports;
  private final String namespace;
  private final String name;
  private final String uid;
  private final Instant startTime;
  private final Map<String, String> ownerLabels;
  private final List<ContainerWorker> containers = new ArrayList<>();
  private Pod pod;
  private PodStatus lastDesired;
  private CompletableFuture<Void> stopping;

  PodWorker(KubernetesClient client, WorkerContext context, PortAllocator ports, Pod pod) {
    this.client = client;
    this.context = context;
    this.ports = ports;
    this.pod = pod;
    this.namespace = pod.getMetadata().getNamespace();
    this.name = pod.getMetadata().getName();
    this.uid = pod.getMetadata().getUid();
    this.ownerLabels = OwnerLabels.of(pod);
    PodStatus found = pod.getStatus();
    this.startTime =
        found != null && found.getStartTime() != null
            ? Instant.parse(found.getStartTime())
            : Instant.now();
    Path dir = context.podsDir().resolve(namespace + "_" + name);
    try {
      Files.createDirectories(dir);
    } catch (IOException e) {
      throw new UncheckedIOException("cannot create " + dir, e);
    }
    RestartPolicy policy = RestartPolicy.of(pod.getSpec().getRestartPolicy());
    Optional<ServiceAccountCredentials.Token> token = Optional.empty();
    Optional<Path> kubeconfig = Optional.empty();
    String credentialError = null;
    try {
      token = context.credentials().request(pod);
      if (token.isPresent()) {
        kubeconfig = Optional.of(ServiceAccountCredentials.writeKubeconfig(token.get(), dir));
      }
    } catch (IOException e) {
      credentialError = e.getMessage();
    }
    for (Container container : pod.getSpec().getContainers()) {
      ContainerLaunch launch =
          ContainerLaunch.plan(pod, container, context.images(), context.nodeName());
      if (launch instanceof ContainerLaunch.Startable && credentialError != null) {
        launch = new ContainerLaunch.NotRunnable(ContainerLaunch.CONFIG_ERROR, credentialError);
      } else if (launch instanceof ContainerLaunch.Jar jar && kubeconfig.isPresent()) {
        launch =
            jar.withVariable(ServiceAccountCredentials.KUBECONFIG, kubeconfig.get().toString());
      } else if (launch instanceof ContainerLaunch.Image image && token.isPresent()) {
        launch = image.withToken(token.get());
      }
      Optional<Integer> port =
          launch instanceof ContainerLaunch.Startable startable && startable.needsPort()
              ? Optional.of(ports.allocate())
              : Optional.empty();
      if (launch instanceof ContainerLaunch.NotRunnable notRunnable) {
        LOG.warn("{}/{}: {}", label(), container.getName(), notRunnable.message());
      }
      containers.add(
          new ContainerWorker(
              context,
              label(),
              dir,
              container,
              launch,
              policy,
              port,
              previousStatus(found, container.getName())));
    }
  }

  String uid() {
    return uid;
  }

  /**
   * Brings the pod's processes and status in line with {@code current}, the pod as the API server
   * last showed it (empty once it is gone). True when the worker is done and can be dropped.
   */
  boolean sync(Optional<Pod> current, Instant now, Executor stopper) {
    current.ifPresent(p -> pod = p);
    boolean gone = current.isEmpty();
    boolean deleting = gone || pod.getMetadata().getDeletionTimestamp() != null;
    if (deleting && stopping == null) {
      stopping = stopAll(grace(pod), stopper);
    }
    for (ContainerWorker container : containers) {
      container.sync(now, deleting);
    }
    if (!gone) {
      writeStatus(now);
    }
    if (!deleting || !stopping.isDone() || !containers.stream().allMatch(ContainerWorker::idle)) {
      return false;
    }
    return gone || deleteNow(client, pod.getMetadata());
  }

  /** Starts stopping every process on {@code stopper}: SIGTERM, then SIGKILL after grace. */
  CompletableFuture<Void> stopAll(Duration grace, Executor stopper) {
    List<CompletableFuture<Void>> stops = new ArrayList<>();
    for (ContainerWorker container : containers) {
      container
          .process()
          .ifPresent(
              process ->
                  stops.add(
                      CompletableFuture.runAsync(
                          () -> Processes.stop(process, grace, label() + "/" + container.name()),
                          stopper)));
    }
    if (!stops.isEmpty()) {
      LOG.info("{}: stopping {} process(es), grace {} s", label(), stops.size(), grace.toSeconds());
    }
    return CompletableFuture.allOf(stops.toArray(CompletableFuture[]::new));
  }

  /** Scrape targets of the containers running now. */
  List<Target> targets() {
    List<Target> targets = new ArrayList<>();
    for (ContainerWorker container : containers) {
      if (container.process().isEmpty() || container.port().isEmpty()) {
        continue;
      }
      Map<String, String> labels = new LinkedHashMap<>();
      labels.put("namespace", namespace);
      labels.put("pod", name);
      labels.put("container", container.name());
      labels.putAll(ownerLabels);
      targets.add(new Target(ContainerLaunch.LOOPBACK + ":" + container.port().get(), labels));
    }
    return targets;
  }

  /** Gives the pod's ports back; called once its processes are gone. */
  void release() {
    containers.forEach(c -> c.port().ifPresent(ports::release));
  }

  /** The grace the pod asked for, capped by {@code --max-grace-seconds}. */
  private Duration grace(Pod of) {
    Long seconds = of.getMetadata().getDeletionGracePeriodSeconds();
    if (seconds == null) {
      seconds = of.getSpec().getTerminationGracePeriodSeconds();
    }
    Duration asked = Duration.ofSeconds(seconds == null ? DEFAULT_GRACE_SECONDS : seconds);
    return asked.compareTo(context.maxGrace()) > 0 ? context.maxGrace() : asked;
  }

  private void writeStatus(Instant now) {
    List<ContainerStatus> statuses = containers.stream().map(ContainerWorker::status).toList();
    Optional<String> unready =
        containers.stream()
            .map(ContainerWorker::unreadyReason)
            .flatMap(Optional::stream)
            .findFirst();
    List<PodCondition> previous =
        lastDesired != null
            ? lastDesired.getConditions()
            : pod.getStatus() == null || pod.getStatus().getConditions() == null
                ? List.of()
                : pod.getStatus().getConditions();
    PodStatus desired = PodStatusReport.desired(pod, statuses, unready, startTime, previous, now);
    if (desired.equals(lastDesired)) {
      return;
    }
    PodStatus merged = PodStatusReport.merged(pod.getStatus(), desired);
    // The test operation makes the patch fail rather than touch a new pod of the same name.
    String patch =
        client
            .getKubernetesSerialization()
            .asJson(
                List.of(
                    Map.of("op", "test", "path", "/metadata/uid", "value", uid),
                    Map.of("op", "add", "path", "/status", "value", merged)));
    try {
      client
          .pods()
          .inNamespace(namespace)
          .withName(name)
          .subresource("status")
          .patch(PatchContext.of(PatchType.JSON), patch);
      if (lastDesired == null || !desired.getPhase().equals(lastDesired.getPhase())) {
        LOG.info("{}: phase {}", label(), desired.getPhase());
      }
      lastDesired = desired;
    } catch (KubernetesClientException e) {
      if (e.getCode() != HttpURLConnection.HTTP_NOT_FOUND) {
        LOG.warn("{}: cannot write status: {}", label(), e.getMessage());
      }
    }
  }

  /**
   * Deletes the pod at once (grace 0: the node confirms its processes are gone), only if it is
   * still the pod of {@code meta}'s UID; true when that pod is gone.
   */
  static boolean deleteNow(KubernetesClient client, ObjectMeta meta) {
    String label = meta.getNamespace() + "/" + meta.getName();
    try {
      client.raw(
          "/api/v1/namespaces/" + meta.getNamespace() + "/pods/" + meta.getName(),
          "DELETE",
          Map.of(
              "apiVersion",
              "v1",
              "kind",
              "DeleteOptions",
              "gracePeriodSeconds",
              0,
              "preconditions",
              Map.of("uid", meta.getUid())));
      LOG.info("{}: deleted", label);
      return true;
    } catch (KubernetesClientException e) {
      // Not found, or another pod under the name (409): the pod of this UID is gone either way.
      if (e.getCode() == HttpURLConnection.HTTP_NOT_FOUND
          || e.getCode() == HttpURLConnection.HTTP_CONFLICT) {
        return true;
      }
      LOG.warn("{}: cannot delete: {}", label, e.getMessage());
      return false;
    }
  }

  private String label() {
    return namespace + "/" + name;
  }

  private static Optional<ContainerStatus> previousStatus(PodStatus status, String container) {
    if (status == null || status.getContainerStatuses() == null) {
      return Optional.empty();
    }
    return status.getContainerStatuses().stream()
        .filter(s -> container.equals(s.getName()))
        .findFirst();
  }
}
