package dev.heapherd.reconcile;

import dev.heapherd.observe.Observer;
import io.fabric8.kubernetes.api.model.ContainerStateBuilder;
import io.fabric8.kubernetes.api.model.ContainerStatusBuilder;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.PodBuilder;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.apps.DeploymentStatusBuilder;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.utils.KubernetesSerialization;
import java.time.Instant;
import java.util.List;
import java.util.UUID;
import java.util.function.LongConsumer;

/**
 * Plays the Deployment controller and the kubelet, which the mock API server does not run: it
 * replaces a Deployment's pods the way a rolling update does (surge pods first, then old ones
 * removed) and reports the memory limits of all pods after every move.
 */
final class FakeWorkloadController {

  private static final KubernetesSerialization JSON = new KubernetesSerialization();

  private final KubernetesClient client;
  private final String namespace;

  /** How long ago the pods this controller starts turned Ready: past the operator's settle time. */
  private static final long READY_AGO_SECONDS = 2 * Observer.SETTLE_SECONDS;

  FakeWorkloadController(KubernetesClient client, String namespace) {
    this.client = client;
    this.namespace = namespace;
  }

  /** Pods of {@code d} as its current template says, all ready, and a status that says so. */
  void settle(String name) {
    Deployment d = deployment(name);
    for (Pod p : podsOf(d)) {
      client.pods().inNamespace(namespace).resource(p).delete();
    }
    for (int i = 0; i < d.getSpec().getReplicas(); i++) {
      createPod(d, null);
    }
    markDone(name);
  }

  /**
   * Rolls {@code name} to its current template: at most {@code surge} new pods beside the old ones,
   * then as many old ones deleted, until only new ones remain; {@code sample} gets the namespace's
   * pod memory after every move.
   */
  void roll(String name, int surge, LongConsumer sample) {
    Deployment d = deployment(name);
    String current = templateKey(d);
    int replicas = d.getSpec().getReplicas();
    while (true) {
      List<Pod> pods = podsOf(deployment(name));
      List<Pod> old = pods.stream().filter(p -> !current.equals(key(p))).toList();
      long fresh = pods.size() - old.size();
      if (old.isEmpty() && fresh == replicas) {
        break;
      }
      long add = Math.min(Math.max(surge, 1), replicas - fresh);
      for (int i = 0; i < add; i++) {
        createPod(d, null);
      }
      sample.accept(podMemoryBytes());
      old.stream()
          .limit(Math.max(add, 1))
          .forEach(p -> client.pods().inNamespace(namespace).resource(p).delete());
      sample.accept(podMemoryBytes());
    }
    markDone(name);
  }

  /** Starts one pod on {@code name}'s current template whose container was OOMKilled. */
  void oomKillNewPod(String name) {
    createPod(deployment(name), "OOMKilled");
  }

  /** Sum of the memory limits of every container of every pod in the namespace. */
  long podMemoryBytes() {
    return client.pods().inNamespace(namespace).list().getItems().stream()
        .flatMap(p -> p.getSpec().getContainers().stream())
        .filter(c -> c.getResources() != null && c.getResources().getLimits() != null)
        .map(c -> c.getResources().getLimits().get("memory"))
        .filter(q -> q != null)
        .mapToLong(q -> q.getNumericalAmount().longValue())
        .sum();
  }

  private void markDone(String name) {
    Deployment d = deployment(name);
    int replicas = d.getSpec().getReplicas();
    d.setStatus(
        new DeploymentStatusBuilder()
            .withObservedGeneration(d.getMetadata().getGeneration())
            .withReplicas(replicas)
            .withUpdatedReplicas(replicas)
            .withReadyReplicas(replicas)
            .withAvailableReplicas(replicas)
            .build());
    client.apps().deployments().inNamespace(namespace).resource(d).updateStatus();
  }

  private void createPod(Deployment d, String terminatedReason) {
    var template = d.getSpec().getTemplate();
    var builder =
        new PodBuilder()
            .withNewMetadata()
            .withNamespace(namespace)
            .withName(
                d.getMetadata().getName() + "-" + UUID.randomUUID().toString().substring(0, 8))
            .withLabels(template.getMetadata().getLabels())
            .addToAnnotations("test/template", templateKey(d))
            .endMetadata()
            .withSpec(JSON.clone(template.getSpec()))
            .withNewStatus()
            .withPhase("Running")
            .endStatus();
    String container = template.getSpec().getContainers().get(0).getName();
    var status =
        new ContainerStatusBuilder()
            .withName(container)
            .withReady(terminatedReason == null)
            .withRestartCount(0);
    if (terminatedReason != null) {
      status
          .withRestartCount(1)
          .withLastState(
              new ContainerStateBuilder()
                  .withNewTerminated()
                  .withReason(terminatedReason)
                  .withExitCode(137)
                  .endTerminated()
                  .build());
    }
    builder.editStatus().withContainerStatuses(status.build()).endStatus();
    if (terminatedReason == null) {
      // Ready since before the operator's settle time: these tests are about the order of steps;
      // ObserverTest and FleetE2E cover how long a pod must have been ready.
      builder
          .editStatus()
          .addNewCondition()
          .withType("Ready")
          .withStatus("True")
          .withLastTransitionTime(Instant.now().minusSeconds(READY_AGO_SECONDS).toString())
          .endCondition()
          .endStatus();
    }
    client.pods().inNamespace(namespace).resource(builder.build()).create();
  }

  private List<Pod> podsOf(Deployment d) {
    return client
        .pods()
        .inNamespace(namespace)
        .withLabels(d.getSpec().getSelector().getMatchLabels())
        .list()
        .getItems();
  }

  private Deployment deployment(String name) {
    return client.apps().deployments().inNamespace(namespace).withName(name).get();
  }

  private static String templateKey(Deployment d) {
    return Integer.toHexString(JSON.asJson(d.getSpec().getTemplate().getSpec()).hashCode());
  }

  private static String key(Pod p) {
    return p.getMetadata().getAnnotations() == null
        ? ""
        : p.getMetadata().getAnnotations().getOrDefault("test/template", "");
  }
}
