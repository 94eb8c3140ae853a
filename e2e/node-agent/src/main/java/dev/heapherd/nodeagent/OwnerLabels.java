package dev.heapherd.nodeagent;

import io.fabric8.kubernetes.api.model.OwnerReference;
import io.fabric8.kubernetes.api.model.Pod;
import java.util.Map;

/**
 * The workload a pod belongs to, from its controller owner reference: a ReplicaSet named {@code
 * <deployment>-<pod-template-hash>} belongs to that Deployment; any other controller (StatefulSet,
 * a bare ReplicaSet, DaemonSet, Job) is the workload itself.
 */
final class OwnerLabels {

  /** The label the Deployment controller puts on ReplicaSets and their pods. */
  static final String TEMPLATE_HASH = "pod-template-hash";

  private OwnerLabels() {}

  /** {@code workload_kind} and {@code workload}, or nothing for a pod without a controller. */
  static Map<String, String> of(Pod pod) {
    if (pod.getMetadata().getOwnerReferences() == null) {
      return Map.of();
    }
    for (OwnerReference owner : pod.getMetadata().getOwnerReferences()) {
      if (!Boolean.TRUE.equals(owner.getController())) {
        continue;
      }
      String hash =
          pod.getMetadata().getLabels() == null
              ? null
              : pod.getMetadata().getLabels().get(TEMPLATE_HASH);
      if ("ReplicaSet".equals(owner.getKind())
          && hash != null
          && owner.getName().endsWith("-" + hash)) {
        return Map.of(
            "workload_kind",
            "Deployment",
            "workload",
            owner.getName().substring(0, owner.getName().length() - hash.length() - 1));
      }
      return Map.of("workload_kind", owner.getKind(), "workload", owner.getName());
    }
    return Map.of();
  }
}
