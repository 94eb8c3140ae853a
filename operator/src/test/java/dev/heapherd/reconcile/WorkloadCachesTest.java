package dev.heapherd.reconcile;

import static org.assertj.core.api.Assertions.assertThat;

import io.fabric8.kubernetes.api.model.ManagedFieldsEntryBuilder;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.PodBuilder;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.apps.DeploymentBuilder;
import io.fabric8.kubernetes.client.informers.cache.Cache;
import io.fabric8.kubernetes.client.informers.cache.ReducedStateItemStore;
import io.fabric8.kubernetes.client.utils.KubernetesSerialization;
import org.junit.jupiter.api.Test;

/** The informer stores keep what the observer reads and drop the rest. */
class WorkloadCachesTest {

  private static final Pod POD =
      new PodBuilder()
          .withNewMetadata()
          .withNamespace("orchard")
          .withName("cider-press-7d4f9-x2k8q")
          .withResourceVersion("41")
          .addToLabels("app", "cider-press")
          .addToAnnotations("note", "kept out of the cache")
          .withManagedFields(new ManagedFieldsEntryBuilder().withManager("kubectl").build())
          .endMetadata()
          .withNewSpec()
          .withNodeName("node-3")
          .addNewContainer()
          .withName("app")
          .addNewEnv()
          .withName("JAVA_TOOL_OPTIONS")
          .withValue("-Xmx512m")
          .endEnv()
          .endContainer()
          .addNewVolume()
          .withName("scratch")
          .withNewEmptyDir()
          .endEmptyDir()
          .endVolume()
          .endSpec()
          .withNewStatus()
          .withPhase("Running")
          .addNewCondition()
          .withType("Ready")
          .withStatus("True")
          .withLastTransitionTime("2026-12-01T08:00:00Z")
          .endCondition()
          .addNewContainerStatus()
          .withName("app")
          .withRestartCount(2)
          .endContainerStatus()
          .endStatus()
          .build();

  @Test
  void aCachedPodKeepsWhatTheObserverReadsAndNothingElse() {
    var store =
        new ReducedStateItemStore<>(
            ReducedStateItemStore.NAME_KEY_STATE,
            Pod.class,
            new KubernetesSerialization(),
            WorkloadCaches.POD_FIELDS);
    String key = Cache.metaNamespaceKeyFunc(POD);
    store.put(key, POD);

    Pod cached = store.get(key);

    assertThat(cached.getMetadata().getNamespace()).isEqualTo("orchard");
    assertThat(cached.getMetadata().getName()).isEqualTo("cider-press-7d4f9-x2k8q");
    assertThat(cached.getMetadata().getResourceVersion()).isEqualTo("41");
    assertThat(cached.getMetadata().getLabels()).containsEntry("app", "cider-press");
    assertThat(cached.getSpec().getContainers().get(0).getEnv().get(0).getValue())
        .isEqualTo("-Xmx512m");
    assertThat(cached.getStatus().getConditions().get(0).getLastTransitionTime())
        .isEqualTo("2026-12-01T08:00:00Z");
    assertThat(cached.getStatus().getContainerStatuses().get(0).getRestartCount()).isEqualTo(2);
    assertThat(cached.getMetadata().getAnnotations()).isNullOrEmpty();
    assertThat(cached.getMetadata().getManagedFields()).isNullOrEmpty();
    assertThat(cached.getSpec().getVolumes()).isNullOrEmpty();
    assertThat(cached.getSpec().getNodeName()).isNull();
    assertThat(cached.getStatus().getPhase()).isNull();
  }

  @Test
  void aCachedWorkloadLosesOnlyItsManagedFields() {
    Deployment d =
        new DeploymentBuilder()
            .withNewMetadata()
            .withNamespace("orchard")
            .withName("cider-press")
            .addToAnnotations("note", "written back with the workload")
            .withManagedFields(new ManagedFieldsEntryBuilder().withManager("kubectl").build())
            .endMetadata()
            .withNewSpec()
            .withReplicas(3)
            .endSpec()
            .build();
    var store = new WorkloadCaches.WithoutManagedFields<Deployment>();
    store.put(store.getKey(d), d);

    Deployment cached = store.get("orchard/cider-press");

    assertThat(cached.getMetadata().getManagedFields()).isNullOrEmpty();
    assertThat(cached.getMetadata().getAnnotations()).containsKey("note");
    assertThat(cached.getSpec().getReplicas()).isEqualTo(3);
  }
}
