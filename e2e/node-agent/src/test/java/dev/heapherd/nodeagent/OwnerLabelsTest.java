package dev.heapherd.nodeagent;

import static org.assertj.core.api.Assertions.assertThat;

import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.PodBuilder;
import java.util.Map;
import org.junit.jupiter.api.Test;

class OwnerLabelsTest {

  @Test
  void replicaSetOfADeploymentNamesTheDeployment() {
    assertThat(OwnerLabels.of(owned("ReplicaSet", "checkout-7d9c6b5f4d", "7d9c6b5f4d")))
        .isEqualTo(Map.of("workload_kind", "Deployment", "workload", "checkout"));
  }

  @Test
  void otherControllersNameThemselves() {
    assertThat(OwnerLabels.of(owned("StatefulSet", "ledger", null)))
        .isEqualTo(Map.of("workload_kind", "StatefulSet", "workload", "ledger"));
    assertThat(OwnerLabels.of(owned("ReplicaSet", "plain", "7d9c6b5f4d")))
        .isEqualTo(Map.of("workload_kind", "ReplicaSet", "workload", "plain"));
  }

  @Test
  void aBarePodHasNoWorkload() {
    assertThat(
            OwnerLabels.of(new PodBuilder().withNewMetadata().withName("p").endMetadata().build()))
        .isEmpty();
  }

  private static Pod owned(String kind, String name, String hash) {
    PodBuilder pod =
        new PodBuilder()
            .withNewMetadata()
            .withName(name + "-x")
            .addNewOwnerReference()
            .withKind(kind)
            .withName(name)
            .withController(true)
            .endOwnerReference()
            .endMetadata();
    if (hash != null) {
      pod.editMetadata().addToLabels(OwnerLabels.TEMPLATE_HASH, hash).endMetadata();
    }
    return pod.build();
  }
}
