package dev.heapherd.chart;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.awaitility.Awaitility.await;

import dev.heapherd.harness.ControlPlane;
import io.fabric8.kubernetes.api.model.GenericKubernetesResource;
import io.fabric8.kubernetes.api.model.GenericKubernetesResourceBuilder;
import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.api.model.NamespaceBuilder;
import io.fabric8.kubernetes.api.model.rbac.RoleBindingBuilder;
import io.fabric8.kubernetes.api.model.rbac.RoleBuilder;
import io.fabric8.kubernetes.client.Config;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.KubernetesClientBuilder;
import io.fabric8.kubernetes.client.KubernetesClientException;
import io.fabric8.kubernetes.client.dsl.base.ResourceDefinitionContext;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The chart's admission policy on a real kube-apiserver, with impersonated users: a pool author who
 * may not update the namespace's workloads cannot turn on Apply mode or approve a proposal.
 */
class AdmissionPolicyIT {

  private static final String NAMESPACE = "tidewater-dispatch";

  /** May edit HeapPools, not Deployments or StatefulSets. */
  private static final String POOL_AUTHOR = "mira@tidewater.example";

  /** May edit HeapPools and update the workloads. */
  private static final String WORKLOAD_OWNER = "oren@tidewater.example";

  /** May update Deployments but not StatefulSets. */
  private static final String DEPLOYMENT_OWNER = "ines@tidewater.example";

  /** Holds only the cluster's standard view role in the namespace. */
  private static final String VIEWER = "lena@tidewater.example";

  /** Holds only the cluster's standard edit role in the namespace. */
  private static final String EDITOR = "tomas@tidewater.example";

  /** The API server applies a new policy within seconds; this bounds the wait. */
  private static final Duration POLICY_ACTIVE_TIMEOUT = Duration.ofSeconds(60);

  private static final ResourceDefinitionContext HEAP_POOLS =
      new ResourceDefinitionContext.Builder()
          .withGroup("heapherd.dev")
          .withVersion("v1alpha1")
          .withPlural("heappools")
          .withKind("HeapPool")
          .withNamespaced(true)
          .build();

  private static ControlPlane cluster;
  private static KubernetesClient admin;

  @BeforeAll
  static void start() throws Exception {
    cluster = ControlPlane.start();
    admin = cluster.client();
    ControlPlane.installCrd(admin, Path.of("../crds/heappools.heapherd.dev-v1.yml"));
    admin
        .namespaces()
        .resource(
            new NamespaceBuilder().withNewMetadata().withName(NAMESPACE).endMetadata().build())
        .create();
    for (HasMetadata o : Chart.render(Map.of("prometheus.url", "http://prometheus:9090"))) {
      String kind = o.getKind();
      // The policy, and the user roles that join the cluster's standard view and edit roles.
      if (kind.startsWith("ValidatingAdmissionPolicy")
          || (kind.equals("ClusterRole")
              && o.getMetadata().getLabels() != null
              && o.getMetadata().getLabels().keySet().stream()
                  .anyMatch(l -> l.startsWith("rbac.authorization.k8s.io/aggregate-to-")))) {
        admin.resource(o).create();
      }
    }
    grant(POOL_AUTHOR, List.of());
    grant(WORKLOAD_OWNER, List.of("deployments", "statefulsets"));
    grant(DEPLOYMENT_OWNER, List.of("deployments"));
    bindClusterRole(VIEWER, "view");
    bindClusterRole(EDITOR, "edit");
  }

  @AfterAll
  static void stop() throws Exception {
    if (admin != null) {
      admin.close();
    }
    if (cluster != null) {
      cluster.close();
    }
  }

  @Test
  void aPoolAuthorWhoMayNotUpdateTheWorkloadsCannotTurnOnApply() throws Exception {
    try (KubernetesClient author = as(POOL_AUTHOR)) {
      awaitRefused(author, pool("policy-probe", "Apply", null));
      assertThat(create(author, pool("dispatch", "DryRun", null))).isNotNull();
      assertThatThrownBy(() -> create(author, pool("approved", "DryRun", "3f9c2a7b1d4e6f80")))
          .hasMessageContaining(POOL_AUTHOR + " may not update them there");
      GenericKubernetesResource dryRun =
          author
              .genericKubernetesResources(HEAP_POOLS)
              .inNamespace(NAMESPACE)
              .withName("dispatch")
              .get();
      ((Map<String, Object>) dryRun.getAdditionalProperties().get("spec")).put("mode", "Apply");
      assertThatThrownBy(
              () ->
                  author
                      .genericKubernetesResources(HEAP_POOLS)
                      .inNamespace(NAMESPACE)
                      .resource(dryRun)
                      .update())
          .hasMessageContaining("may not update them there");
    }
  }

  @Test
  void anOwnerOfTheWorkloadsMayTurnOnApply() throws Exception {
    try (KubernetesClient owner = as(WORKLOAD_OWNER)) {
      await()
          .atMost(POLICY_ACTIVE_TIMEOUT)
          .ignoreExceptionsMatching(e -> !(e instanceof AssertionError))
          .untilAsserted(
              () ->
                  assertThat(create(owner, pool("owned", "Apply", "3f9c2a7b1d4e6f80")))
                      .isNotNull());
    }
  }

  @Test
  void anOwnerOfDeploymentsOnlyCannotTurnOnApply() throws Exception {
    try (KubernetesClient owner = as(DEPLOYMENT_OWNER)) {
      awaitRefused(owner, pool("half-owned", "Apply", null));
    }
  }

  @Test
  void theStandardViewAndEditRolesCarryTheChartsUserRoles() throws Exception {
    // The cluster-role aggregation controller (kube-controller-manager) copies the chart's rules
    // into view and edit; until it has, the users below are refused.
    try (KubernetesClient viewer = as(VIEWER);
        KubernetesClient editor = as(EDITOR)) {
      await()
          .atMost(POLICY_ACTIVE_TIMEOUT)
          .ignoreExceptionsMatching(e -> !(e instanceof AssertionError))
          .untilAsserted(
              () -> assertThat(create(editor, pool("edited", "DryRun", null))).isNotNull());
      await()
          .atMost(POLICY_ACTIVE_TIMEOUT)
          .ignoreExceptionsMatching(e -> !(e instanceof AssertionError))
          .untilAsserted(
              () ->
                  assertThat(
                          viewer
                              .genericKubernetesResources(HEAP_POOLS)
                              .inNamespace(NAMESPACE)
                              .withName("edited")
                              .get())
                      .isNotNull());
      assertThatThrownBy(() -> create(viewer, pool("viewed", "DryRun", null)))
          .isInstanceOf(KubernetesClientException.class)
          .hasMessageContaining("forbidden");
      // edit may update Deployments and StatefulSets, so its holder may also turn on Apply.
      assertThat(create(editor, pool("edited-apply", "Apply", null))).isNotNull();
    }
  }

  /** Waits until the policy is active and refuses {@code p} from {@code c}. */
  private static void awaitRefused(KubernetesClient c, GenericKubernetesResource p) {
    await()
        .atMost(POLICY_ACTIVE_TIMEOUT)
        .ignoreExceptionsMatching(e -> !(e instanceof AssertionError))
        .untilAsserted(
            () ->
                assertThatThrownBy(() -> create(c, p))
                    .isInstanceOf(KubernetesClientException.class)
                    .hasMessageContaining("may not update them there"));
  }

  /** Binds {@code user} to one of the cluster's standard roles in the namespace. */
  private static void bindClusterRole(String user, String clusterRole) {
    bind(user, "ClusterRole", clusterRole);
  }

  private static void bind(String user, String roleKind, String roleName) {
    admin
        .rbac()
        .roleBindings()
        .resource(
            new RoleBindingBuilder()
                .withNewMetadata()
                .withName(user.substring(0, user.indexOf('@')))
                .withNamespace(NAMESPACE)
                .endMetadata()
                .withNewRoleRef("rbac.authorization.k8s.io", roleKind, roleName)
                .addNewSubject()
                .withKind("User")
                .withApiGroup("rbac.authorization.k8s.io")
                .withName(user)
                .endSubject()
                .build())
        .create();
  }

  private static GenericKubernetesResource create(KubernetesClient c, GenericKubernetesResource p) {
    return c.genericKubernetesResources(HEAP_POOLS).inNamespace(NAMESPACE).resource(p).create();
  }

  private static GenericKubernetesResource pool(String name, String mode, String approved) {
    Map<String, Object> spec =
        new java.util.LinkedHashMap<>(
            Map.of(
                "mode",
                mode,
                "memoryBudget",
                "8Gi",
                "selector",
                Map.of("matchLabels", Map.of("heapherd.dev/pool", name))));
    if (approved != null) {
      spec.put("approvedProposal", approved);
    }
    return new GenericKubernetesResourceBuilder()
        .withApiVersion("heapherd.dev/v1alpha1")
        .withKind("HeapPool")
        .withNewMetadata()
        .withName(name)
        .withNamespace(NAMESPACE)
        .endMetadata()
        .withAdditionalProperties(Map.of("spec", spec))
        .build();
  }

  /** Lets {@code user} edit HeapPools in the namespace, and update {@code workloads} there. */
  private static void grant(String user, List<String> workloads) {
    String name = user.substring(0, user.indexOf('@'));
    var role =
        new RoleBuilder()
            .withNewMetadata()
            .withName(name)
            .withNamespace(NAMESPACE)
            .endMetadata()
            .addNewRule()
            .withApiGroups("heapherd.dev")
            .withResources("heappools")
            .withVerbs("get", "list", "create", "update", "patch")
            .endRule();
    if (!workloads.isEmpty()) {
      role.addNewRule()
          .withApiGroups("apps")
          .withResources(workloads)
          .withVerbs("get", "update")
          .endRule();
    }
    admin.rbac().roles().resource(role.build()).create();
    bind(user, "Role", name);
  }

  /** A client that acts as {@code user} through the admin's impersonation right. */
  private static KubernetesClient as(String user) throws Exception {
    Config config = Config.fromKubeconfig(Files.readString(cluster.kubeconfig()));
    config.setImpersonateUsername(user);
    return new KubernetesClientBuilder().withConfig(config).build();
  }
}
