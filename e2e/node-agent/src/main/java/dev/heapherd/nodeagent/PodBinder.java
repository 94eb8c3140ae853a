package dev.heapherd.nodeagent;

import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.KubernetesClientException;
import java.util.HashSet;
import java.util.Map;
import java.util.Set;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The scheduler's part: binds every pending, unassigned pod meant for the default scheduler to this
 * node through the pods/binding subresource. It checks nodeSelector only: no resource fit, affinity
 * or taints, as there is one node.
 */
final class PodBinder {

  /** The scheduler name the API server defaults pods to. */
  static final String DEFAULT_SCHEDULER = "default-scheduler";

  private static final Logger LOG = LoggerFactory.getLogger(PodBinder.class);

  private final KubernetesClient client;
  private final String nodeName;
  private final Map<String, String> nodeLabels;

  /** Pods bound but not yet seen bound: the informer lags the binding by a moment. */
  private final Set<String> bound = new HashSet<>();

  PodBinder(KubernetesClient client, String nodeName, Map<String, String> nodeLabels) {
    this.client = client;
    this.nodeName = nodeName;
    this.nodeLabels = nodeLabels;
  }

  /** Whether this node would bind {@code pod}, given {@code nodeLabels}. */
  static boolean wants(Pod pod, Map<String, String> nodeLabels) {
    String nodeName = pod.getSpec().getNodeName();
    String scheduler = pod.getSpec().getSchedulerName();
    Map<String, String> selector = pod.getSpec().getNodeSelector();
    return (nodeName == null || nodeName.isEmpty())
        && pod.getMetadata().getDeletionTimestamp() == null
        && (pod.getStatus() == null || PodStatusReport.PENDING.equals(pod.getStatus().getPhase()))
        && (scheduler == null || scheduler.isEmpty() || DEFAULT_SCHEDULER.equals(scheduler))
        && (selector == null || nodeLabels.entrySet().containsAll(selector.entrySet()));
  }

  /** Binds {@code pod} when this node wants it; called for every pod the agent sees. */
  void offer(Pod pod) {
    String uid = pod.getMetadata().getUid();
    if (!wants(pod, nodeLabels)) {
      bound.remove(uid);
      return;
    }
    if (!bound.add(uid)) {
      return;
    }
    String namespace = pod.getMetadata().getNamespace();
    String name = pod.getMetadata().getName();
    try {
      client.raw(
          "/api/v1/namespaces/" + namespace + "/pods/" + name + "/binding",
          "POST",
          Map.of(
              "apiVersion",
              "v1",
              "kind",
              "Binding",
              "metadata",
              Map.of("name", name, "uid", uid),
              "target",
              Map.of("apiVersion", "v1", "kind", "Node", "name", nodeName)));
      LOG.info("{}/{} bound to {}", namespace, name, nodeName);
    } catch (KubernetesClientException e) {
      // Try again on the next pass: the pod may have been deleted or bound meanwhile.
      bound.remove(uid);
      LOG.warn("cannot bind {}/{}: {}", namespace, name, e.getMessage());
    }
  }

  /** Forgets pods that are gone. */
  void retain(Set<String> uids) {
    bound.retainAll(uids);
  }
}
