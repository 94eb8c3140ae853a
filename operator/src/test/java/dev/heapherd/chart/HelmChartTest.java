package dev.heapherd.chart;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import com.marcnuri.helm.Helm;
import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.networking.v1.NetworkPolicy;
import io.fabric8.kubernetes.api.model.rbac.ClusterRole;
import io.fabric8.kubernetes.api.model.rbac.ClusterRoleBinding;
import io.fabric8.kubernetes.api.model.rbac.PolicyRule;
import io.fabric8.kubernetes.api.model.rbac.Role;
import io.fabric8.kubernetes.api.model.rbac.RoleBinding;
import io.fabric8.kubernetes.client.utils.Serialization;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;

/** The chart lints cleanly and renders what an admin expects, through helm's own library. */
class HelmChartTest {

  static final Path CHART = Chart.DIR;

  /** The operator module's build, which names the image `./dev.sh image` writes. */
  private static final Path POM = Path.of("pom.xml");

  @Test
  void lintsStrictlyWithoutFindings() {
    var result = new Helm(CHART).lint().strict().call();
    assertThat(result.isFailed()).as(String.join("\n", result.getMessages())).isFalse();
  }

  @Test
  void defaultImageIsTheOneTheBuildMakes() throws Exception {
    Matcher built =
        Pattern.compile("<image.name>([^<]+)</image.name>").matcher(Files.readString(POM));
    assertThat(built.find()).as("operator/pom.xml names the image it builds").isTrue();

    Deployment d = only(render("http://prometheus.monitoring:9090"), Deployment.class);

    assertThat(d.getSpec().getTemplate().getSpec().getContainers().get(0).getImage())
        .isEqualTo(built.group(1));
  }

  @Test
  void rendersALeastPrivilegeOperatorThatRunsNonRootOnAReadOnlyFilesystem() throws Exception {
    List<HasMetadata> objects = render("http://prometheus.monitoring:9090");

    ClusterRole role = named(objects, ClusterRole.class, "heapherd");
    assertThat(role.getRules())
        .as("the rules HeapPoolReconcilerIT checks")
        .isEqualTo(operatorRules());
    assertThat(objects).noneMatch(o -> o instanceof Role);

    Deployment d = only(objects, Deployment.class);
    var pod = d.getSpec().getTemplate().getSpec();
    assertThat(pod.getSecurityContext().getRunAsNonRoot()).isTrue();
    var c = pod.getContainers().get(0);
    assertThat(c.getSecurityContext().getReadOnlyRootFilesystem()).isTrue();
    assertThat(c.getSecurityContext().getAllowPrivilegeEscalation()).isFalse();
    assertThat(c.getResources().getLimits()).containsKey("memory");
    assertThat(c.getArgs())
        .contains(
            "operator",
            "--prometheus=http://prometheus.monitoring:9090",
            "--leader-election-namespace=heapherd-system");
    assertThat(c.getLivenessProbe().getHttpGet().getPath()).isEqualTo("/healthz");
    assertThat(c.getReadinessProbe().getHttpGet().getPath()).isEqualTo("/readyz");
    assertThat(pod.getServiceAccountName())
        .isEqualTo(
            only(objects, io.fabric8.kubernetes.api.model.ServiceAccount.class)
                .getMetadata()
                .getName());
  }

  @Test
  void passesWatchedNamespacesAndPrometheusCredentials() {
    List<HasMetadata> objects =
        render(
            Map.of(
                "prometheus.url", "https://prometheus.monitoring:9091",
                "prometheus.bearerTokenSecret", "prometheus-reader",
                "prometheus.caConfigMap", "prometheus-ca",
                "watchNamespaces[0]", "tidewater-dispatch",
                "watchNamespaces[1]", "tidewater-billing"));

    var pod = only(objects, Deployment.class).getSpec().getTemplate().getSpec();
    assertThat(pod.getContainers().get(0).getArgs())
        .contains(
            "--namespaces=tidewater-dispatch,tidewater-billing",
            "--bearer-token-file=/etc/heapherd/prometheus-token/token",
            "--ca-file=/etc/heapherd/prometheus-ca/ca.crt");
    assertThat(pod.getVolumes())
        .filteredOn(v -> v.getSecret() != null)
        .extracting(v -> v.getSecret().getSecretName())
        .containsExactly("prometheus-reader");
    assertThat(pod.getVolumes())
        .filteredOn(v -> v.getConfigMap() != null)
        .extracting(v -> v.getConfigMap().getName())
        .containsExactly("prometheus-ca");
  }

  @Test
  void withWatchedNamespacesGrantsOnlyNamespacedRolesThere() throws Exception {
    List<HasMetadata> objects =
        render(
            Map.of(
                "prometheus.url", "http://prometheus.monitoring:9090",
                "watchNamespaces[0]", "tidewater-dispatch",
                "watchNamespaces[1]", "tidewater-billing"));

    assertThat(objects)
        .filteredOn(o -> o instanceof ClusterRoleBinding)
        .as("no cluster-wide grant to the operator")
        .isEmpty();
    assertThat(objects)
        .filteredOn(o -> o instanceof ClusterRole)
        .extracting(o -> o.getMetadata().getName())
        .containsExactlyInAnyOrder("heapherd-view", "heapherd-edit");
    List<PolicyRule> workloadRules =
        operatorRules().stream()
            .filter(r -> !r.getApiGroups().contains("coordination.k8s.io"))
            .toList();
    for (String ns : List.of("tidewater-dispatch", "tidewater-billing")) {
      Role role =
          objects.stream()
              .filter(o -> o instanceof Role && ns.equals(o.getMetadata().getNamespace()))
              .map(Role.class::cast)
              .findFirst()
              .orElseThrow();
      assertThat(role.getRules()).isEqualTo(workloadRules);
      assertThat(objects)
          .anyMatch(
              o ->
                  o instanceof RoleBinding b
                      && ns.equals(b.getMetadata().getNamespace())
                      && b.getRoleRef().getName().equals(role.getMetadata().getName()));
    }
    Role election = named(objects, Role.class, "heapherd-leader-election");
    assertThat(election.getMetadata().getNamespace()).isEqualTo(Chart.NAMESPACE);
    assertThat(election.getRules())
        .singleElement()
        .satisfies(r -> assertThat(r.getResources()).containsExactly("leases"));
  }

  @Test
  void userRolesJoinTheStandardViewAndEditRoles() {
    List<HasMetadata> objects = render("http://prometheus.monitoring:9090");
    ClusterRole view = named(objects, ClusterRole.class, "heapherd-view");
    ClusterRole edit = named(objects, ClusterRole.class, "heapherd-edit");
    assertThat(view.getMetadata().getLabels())
        .containsEntry("rbac.authorization.k8s.io/aggregate-to-view", "true");
    assertThat(edit.getMetadata().getLabels())
        .containsEntry("rbac.authorization.k8s.io/aggregate-to-edit", "true")
        .doesNotContainKey("rbac.authorization.k8s.io/aggregate-to-view");
    assertThat(view.getRules()).allSatisfy(r -> assertThat(r.getVerbs()).doesNotContain("update"));
  }

  @Test
  void offersAMetricsNetworkPolicyAndTheAdmissionPolicy() {
    List<HasMetadata> objects =
        render(
            Map.of(
                "prometheus.url", "http://prometheus.monitoring:9090",
                "metrics.networkPolicy.enabled", "true"));
    NetworkPolicy policy = only(objects, NetworkPolicy.class);
    assertThat(policy.getSpec().getIngress())
        .singleElement()
        .satisfies(i -> assertThat(i.getPorts().get(0).getPort().getIntVal()).isEqualTo(8080));
    assertThat(objects)
        .extracting(HasMetadata::getKind)
        .contains("ValidatingAdmissionPolicy", "ValidatingAdmissionPolicyBinding");
    assertThat(render("http://prometheus.monitoring:9090"))
        .noneMatch(o -> o instanceof NetworkPolicy);
  }

  @Test
  void bindsTheMetricsPortToTheAddressTheValuesName() {
    var defaults = only(render("http://prometheus.monitoring:9090"), Deployment.class);
    assertThat(defaults.getSpec().getTemplate().getSpec().getContainers().get(0).getArgs())
        .contains("--http-address=0.0.0.0:8080");
    var pod =
        only(
            render(
                Map.of(
                    "prometheus.url", "http://prometheus.monitoring:9090",
                    "metrics.bindAddress", "127.0.0.1")),
            Deployment.class);
    assertThat(pod.getSpec().getTemplate().getSpec().getContainers().get(0).getArgs())
        .contains("--http-address=127.0.0.1:8080");
  }

  private static List<PolicyRule> operatorRules() throws Exception {
    List<PolicyRule> expected = new ArrayList<>();
    for (JsonNode rule :
        new YAMLMapper().readTree(CHART.resolve("files/operator-rules.yaml").toFile())) {
      expected.add(Serialization.unmarshal(rule.toString(), PolicyRule.class));
    }
    return expected;
  }

  private static <T extends HasMetadata> T named(
      List<HasMetadata> objects, Class<T> type, String name) {
    return objects.stream()
        .filter(o -> type.isInstance(o) && name.equals(o.getMetadata().getName()))
        .map(type::cast)
        .findFirst()
        .orElseThrow(() -> new AssertionError("no " + type.getSimpleName() + " " + name));
  }

  @Test
  void refusesToRenderWithoutAPrometheusUrl() {
    assertThatThrownBy(() -> new Helm(CHART).template().withName("heapherd").call())
        .hasMessageContaining("set prometheus.url");
  }

  static List<HasMetadata> render(String prometheusUrl) {
    return Chart.render(Map.of("prometheus.url", prometheusUrl));
  }

  static List<HasMetadata> render(Map<String, String> values) {
    return Chart.render(values);
  }

  private static <T extends HasMetadata> T only(List<HasMetadata> objects, Class<T> type) {
    List<T> found = objects.stream().filter(type::isInstance).map(type::cast).toList();
    assertThat(found).as(type.getSimpleName()).hasSize(1);
    return found.get(0);
  }
}
