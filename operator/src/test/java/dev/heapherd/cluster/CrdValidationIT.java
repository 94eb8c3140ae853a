package dev.heapherd.cluster;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.heapherd.api.HeapPool;
import dev.heapherd.harness.ControlPlane;
import io.fabric8.kubernetes.api.model.GenericKubernetesResource;
import io.fabric8.kubernetes.api.model.NamespaceBuilder;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.KubernetesClientException;
import io.fabric8.kubernetes.client.utils.Serialization;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.stream.Stream;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * The checked-in CRD on a real kube-apiserver: it installs, accepts the bundled example, and
 * rejects bad pools with the schema's own messages (OpenAPI patterns, enums, ranges, CEL rules).
 */
class CrdValidationIT {

  private static final String NAMESPACE = "tidewater-dispatch";

  private static ControlPlane cluster;
  private static KubernetesClient client;

  @BeforeAll
  static void startCluster() throws Exception {
    cluster = ControlPlane.start();
    client = cluster.client();
    ControlPlane.installCrd(client, Path.of("../crds/heappools.heapherd.dev-v1.yml"));
    client
        .namespaces()
        .resource(
            new NamespaceBuilder().withNewMetadata().withName(NAMESPACE).endMetadata().build())
        .create();
  }

  @AfterAll
  static void stopCluster() throws Exception {
    if (client != null) {
      client.close();
    }
    if (cluster != null) {
      cluster.close();
    }
  }

  @Test
  void theBundledExampleIsAcceptedAndDefaultsToDryRun() throws Exception {
    String yaml =
        Files.readString(Path.of("../docs/examples/pool.yaml")).replace("  mode: DryRun\n", "");
    client.resource(Serialization.unmarshal(yaml, GenericKubernetesResource.class)).create();
    HeapPool stored =
        client.resources(HeapPool.class).inNamespace(NAMESPACE).withName("dispatch").get();
    assertThat(stored.getSpec().mode).as("the schema's default").isEqualTo("DryRun");
  }

  static Stream<Arguments> badPools() {
    return Stream.of(
        Arguments.of("negative budget", "memoryBudget: -1Gi", "spec.memoryBudget"),
        Arguments.of("unknown mode", "memoryBudget: 8Gi\n  mode: Sometimes", "spec.mode"),
        Arguments.of(
            "budget and prices",
            "memoryBudget: 8Gi\n  prices: {memoryPerGiBHour: \"0.004\", cpuPerCoreHour: \"0.03\"}",
            "exactly one of memoryBudget or prices"),
        Arguments.of(
            "neither budget nor prices", "mode: DryRun", "exactly one of memoryBudget or prices"),
        Arguments.of(
            "environment variable with a space",
            "memoryBudget: 8Gi\n  rollout: {jvmOptionsVariable: \"JAVA OPTS\"}",
            "spec.rollout.jvmOptionsVariable"),
        Arguments.of(
            "container name in capitals",
            "memoryBudget: 8Gi\n  rollout: {containerName: App}",
            "spec.rollout.containerName"),
        Arguments.of(
            "weight zero", "memoryBudget: 8Gi\n  defaults: {weight: 0}", "spec.defaults.weight"),
        Arguments.of(
            "floor above ceiling",
            "memoryBudget: 8Gi\n  defaults: {heapFloor: 4Gi, heapCeiling: 2Gi}",
            "heapFloor must not be above heapCeiling"),
        Arguments.of(
            "freeze window ending before it starts",
            "memoryBudget: 8Gi\n  rollout: {freezeWindows: [{start: \"2026-12-24T00:00:00Z\", end: \"2026-12-23T00:00:00Z\"}]}",
            "end must be after start"),
        Arguments.of(
            "unknown approval",
            "memoryBudget: 8Gi\n  rollout: {approval: Sometimes}",
            "spec.rollout.approval"));
  }

  @ParameterizedTest(name = "{0}")
  @MethodSource("badPools")
  void badPoolsAreRejected(String what, String spec, String message) {
    String yaml =
        "apiVersion: heapherd.dev/v1alpha1\nkind: HeapPool\nmetadata:\n  name: bad\n  namespace: "
            + NAMESPACE
            + "\nspec:\n  selector:\n    matchLabels: {heapherd.dev/pool: dispatch}\n  "
            + spec
            + "\n";
    var resource = Serialization.unmarshal(yaml, GenericKubernetesResource.class);
    assertThatThrownBy(() -> client.resource(resource).create())
        .as(what)
        .isInstanceOf(KubernetesClientException.class)
        .satisfies(e -> assertThat(((KubernetesClientException) e).getCode()).isEqualTo(422))
        .hasMessageContaining(message);
  }
}
