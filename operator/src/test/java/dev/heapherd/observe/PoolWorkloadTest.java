package dev.heapherd.observe;

import static org.assertj.core.api.Assertions.assertThat;

import io.fabric8.kubernetes.api.model.LabelSelectorBuilder;
import io.fabric8.kubernetes.api.model.LabelSelectorRequirementBuilder;
import io.fabric8.kubernetes.api.model.apps.DeploymentBuilder;
import java.util.Map;
import org.junit.jupiter.api.Test;

/** Which pods a workload's selector owns, per the Kubernetes label selector documentation. */
class PoolWorkloadTest {

  private static PoolWorkload withSelector(LabelSelectorBuilder selector) {
    return new PoolWorkload(
        new DeploymentBuilder()
            .withNewMetadata()
            .withName("quote-api")
            .endMetadata()
            .withNewSpec()
            .withSelector(selector.build())
            .endSpec()
            .build());
  }

  @Test
  void matchLabelsNeedEveryLabel() {
    PoolWorkload w = withSelector(new LabelSelectorBuilder().addToMatchLabels("app", "quote-api"));

    assertThat(w.selects(Map.of("app", "quote-api", "pod-template-hash", "6b7f9"))).isTrue();
    assertThat(w.selects(Map.of("app", "route-planner"))).isFalse();
    assertThat(w.selects(null)).isFalse();
  }

  @Test
  void matchExpressionsAreAppliedToo() {
    PoolWorkload w =
        withSelector(
            new LabelSelectorBuilder()
                .addToMatchExpressions(
                    new LabelSelectorRequirementBuilder()
                        .withKey("app")
                        .withOperator("In")
                        .withValues("quote-api", "quote-api-canary")
                        .build(),
                    new LabelSelectorRequirementBuilder()
                        .withKey("track")
                        .withOperator("NotIn")
                        .withValues("shadow")
                        .build(),
                    new LabelSelectorRequirementBuilder()
                        .withKey("tier")
                        .withOperator("Exists")
                        .build(),
                    new LabelSelectorRequirementBuilder()
                        .withKey("retired")
                        .withOperator("DoesNotExist")
                        .build()));

    assertThat(w.selects(Map.of("app", "quote-api-canary", "tier", "web"))).isTrue();
    assertThat(w.selects(Map.of("app", "quote-api", "tier", "web", "track", "shadow"))).isFalse();
    assertThat(w.selects(Map.of("app", "quote-api"))).as("no tier").isFalse();
    assertThat(w.selects(Map.of("app", "quote-api", "tier", "web", "retired", "yes"))).isFalse();
  }

  @Test
  void anEmptySelectorOwnsNoPod() {
    assertThat(withSelector(new LabelSelectorBuilder()).selects(Map.of("app", "quote-api")))
        .isFalse();
  }
}
