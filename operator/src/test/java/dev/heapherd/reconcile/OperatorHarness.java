package dev.heapherd.reconcile;

import dev.heapherd.api.HeapPool;
import io.fabric8.kubernetes.api.model.apiextensions.v1.CustomResourceDefinition;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.apps.DeploymentBuilder;
import io.fabric8.kubernetes.api.model.authorization.v1.SelfSubjectRulesReviewBuilder;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.server.mock.KubernetesMockServer;
import io.fabric8.kubernetes.client.utils.Serialization;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.io.IOException;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import java.util.Optional;
import java.util.Set;

/** Runs the operator against a mock API server with a client of its own, as in production. */
final class OperatorHarness implements AutoCloseable {

  /** The user agent of the operator's client, to tell its requests from the test's. */
  static final String USER_AGENT = "heapherd-under-test";

  private static final int HTTP_CREATED = 201;

  final KubernetesClient client;
  final SimpleMeterRegistry registry = new SimpleMeterRegistry();
  private final OperatorRuntime operator;

  OperatorHarness(KubernetesMockServer server, MetricsSource metrics) {
    // Leader election first asks which Lease verbs it has; the mock server cannot answer that
    // review, so answer it as a real server would for the chart's role.
    server
        .expect()
        .post()
        .withPath("/apis/authorization.k8s.io/v1/selfsubjectrulesreviews")
        .andReturn(
            HTTP_CREATED,
            new SelfSubjectRulesReviewBuilder()
                .withNewMetadata()
                .endMetadata()
                .withNewStatus()
                .addNewResourceRule()
                .withApiGroups("coordination.k8s.io")
                .withResources("leases")
                .withVerbs("get", "create", "update", "patch")
                .endResourceRule()
                .withIncomplete(false)
                .endStatus()
                .build())
        .always();
    client = server.createClient(b -> b.editOrNewConfig().withUserAgent(USER_AGENT).endConfig());
    operator =
        OperatorRuntime.start(
            client,
            metrics,
            registry,
            new OperatorRuntime.Settings(
                Set.of(),
                // A Lease of its own, so a stopped operator's unexpired Lease never delays it.
                Optional.of("heapherd-" + java.util.UUID.randomUUID().toString().substring(0, 8)),
                false));
  }

  /** The review page the operator serves at {@code path}, if any. */
  Optional<String> reviewPage(String path) {
    return operator.reviewPage(path);
  }

  @Override
  public void close() {
    operator.close();
  }

  /** Registers the generated HeapPool CRD with the mock server. */
  static void installCrd(KubernetesClient client) throws IOException {
    try (InputStream in =
        Files.newInputStream(
            Path.of("target/classes/META-INF/fabric8/heappools.heapherd.dev-v1.yml"))) {
      CustomResourceDefinition crd = Serialization.unmarshal(in, CustomResourceDefinition.class);
      client
          .apiextensions()
          .v1()
          .customResourceDefinitions()
          .resource(crd)
          .createOr(c -> c.update());
    }
  }

  /** A HeapPool from YAML text. */
  static HeapPool pool(String yaml) {
    return Serialization.unmarshal(yaml, HeapPool.class);
  }

  /**
   * A Deployment of the synthetic dispatch services: one container "app" with the heap in
   * JAVA_TOOL_OPTIONS and a memory limit.
   */
  static Deployment deployment(
      String namespace,
      String name,
      int replicas,
      long heapMib,
      long limitMib,
      Map<String, String> labels) {
    return new DeploymentBuilder()
        .withNewMetadata()
        .withNamespace(namespace)
        .withName(name)
        .withLabels(labels)
        .withGeneration(1L)
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
        .addNewContainer()
        .withName("app")
        .withImage("registry.example/dispatch/" + name + ":1.0")
        .addNewEnv()
        .withName("JAVA_TOOL_OPTIONS")
        .withValue("-Xmx" + heapMib + "m -XX:+UseG1GC -Dfile.encoding=UTF-8")
        .endEnv()
        .withNewResources()
        .addToLimits("memory", new io.fabric8.kubernetes.api.model.Quantity(limitMib + "Mi"))
        .addToRequests("memory", new io.fabric8.kubernetes.api.model.Quantity(limitMib + "Mi"))
        .endResources()
        .endContainer()
        .endSpec()
        .endTemplate()
        .endSpec()
        .build();
  }
}
