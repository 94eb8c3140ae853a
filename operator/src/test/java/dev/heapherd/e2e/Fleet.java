package dev.heapherd.e2e;

import io.fabric8.kubernetes.api.model.Quantity;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.apps.DeploymentBuilder;
import java.util.Map;

/**
 * Deployments of the synthetic workload for the end-to-end scenarios: Tidewater Freight's (a
 * fictional company) dispatch services, scaled down to tens of MiB so a laptop runs the fleet.
 */
final class Fleet {

  /** The image the node agent maps to the synthetic workload jar. */
  static final String WORKLOAD_IMAGE = "heapherd.dev/synthetic-workload:dev";

  /** The label the pools select by. */
  static final String POOL_LABEL = "heapherd.dev/pool";

  private Fleet() {}

  /**
   * One JVM service.
   *
   * @param name Deployment name
   * @param liveMib steady live set
   * @param replaceMibPerSecond promotion rate into the old generation
   * @param garbageMibPerSecond young garbage rate
   * @param heapMib -Xmx now
   * @param limitMib container memory limit now
   */
  record Service(
      String name,
      double liveMib,
      double replaceMibPerSecond,
      double garbageMibPerSecond,
      long heapMib,
      long limitMib) {}

  /** A Deployment of one replica running {@code s}, labelled into pool {@code pool}. */
  static Deployment deployment(String namespace, String pool, Service s, int maxSurge) {
    return new DeploymentBuilder()
        .withNewMetadata()
        .withNamespace(namespace)
        .withName(s.name())
        .withLabels(Map.of(POOL_LABEL, pool))
        .endMetadata()
        .withNewSpec()
        .withReplicas(1)
        .withNewSelector()
        .addToMatchLabels("app", s.name())
        .endSelector()
        .withNewStrategy()
        .withType("RollingUpdate")
        .withNewRollingUpdate()
        .withNewMaxSurge(maxSurge)
        .withNewMaxUnavailable(maxSurge == 0 ? 1 : 0)
        .endRollingUpdate()
        .endStrategy()
        .withNewTemplate()
        .withNewMetadata()
        .addToLabels("app", s.name())
        .endMetadata()
        .withNewSpec()
        .withTerminationGracePeriodSeconds(5L)
        .addNewContainer()
        .withName("app")
        .withImage(WORKLOAD_IMAGE)
        .addNewEnv()
        .withName("JAVA_TOOL_OPTIONS")
        // The JDK's default collector: on JDK 17 G1 reports mixed collections among young ones,
        // and young GC time falls as the heap grows (docs/model.md).
        .withValue("-Xmx" + s.heapMib() + "m -XX:+UseG1GC")
        .endEnv()
        .addNewEnv()
        .withName("WORKLOAD_LIVE_MIB")
        .withValue(String.valueOf(s.liveMib()))
        .endEnv()
        .addNewEnv()
        .withName("WORKLOAD_REPLACE_MIB_PER_SECOND")
        .withValue(String.valueOf(s.replaceMibPerSecond()))
        .endEnv()
        .addNewEnv()
        .withName("WORKLOAD_GARBAGE_MIB_PER_SECOND")
        .withValue(String.valueOf(s.garbageMibPerSecond()))
        .endEnv()
        .withNewResources()
        .addToLimits("memory", new Quantity(s.limitMib() + "Mi"))
        .addToRequests("memory", new Quantity(s.limitMib() + "Mi"))
        .endResources()
        .endContainer()
        .endSpec()
        .endTemplate()
        .endSpec()
        .build();
  }
}
