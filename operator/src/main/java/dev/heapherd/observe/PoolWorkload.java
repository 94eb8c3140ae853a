package dev.heapherd.observe;

import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.api.model.IntOrString;
import io.fabric8.kubernetes.api.model.LabelSelector;
import io.fabric8.kubernetes.api.model.LabelSelectorRequirement;
import io.fabric8.kubernetes.api.model.PodTemplateSpec;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.apps.DeploymentBuilder;
import io.fabric8.kubernetes.api.model.apps.StatefulSet;
import io.fabric8.kubernetes.api.model.apps.StatefulSetBuilder;
import java.util.Map;
import java.util.Objects;

/** A Deployment or StatefulSet seen through what a pool needs from either. */
public record PoolWorkload(HasMetadata resource) {

  /**
   * A rolling update's default surge is 25 percent of replicas, rounded up (Kubernetes Deployment
   * documentation, "Max Surge").
   */
  private static final IntOrString DEFAULT_MAX_SURGE = new IntOrString("25%");

  private static final double PERCENT = 100.0;

  /** Wraps a Deployment or StatefulSet; anything else is a programming error. */
  public PoolWorkload {
    if (!(resource instanceof Deployment) && !(resource instanceof StatefulSet)) {
      throw new IllegalArgumentException("not a Deployment or StatefulSet: " + resource.getKind());
    }
  }

  /** Deployment or StatefulSet. */
  public String kind() {
    return resource instanceof Deployment ? "Deployment" : "StatefulSet";
  }

  /** The workload's name. */
  public String name() {
    return resource.getMetadata().getName();
  }

  /** Its annotations, never null. */
  public Map<String, String> annotations() {
    var a = resource.getMetadata().getAnnotations();
    return a == null ? Map.of() : a;
  }

  /** Its labels, never null. */
  public Map<String, String> labels() {
    var l = resource.getMetadata().getLabels();
    return l == null ? Map.of() : l;
  }

  /** The pod template. */
  public PodTemplateSpec template() {
    return resource instanceof Deployment d
        ? d.getSpec().getTemplate()
        : ((StatefulSet) resource).getSpec().getTemplate();
  }

  /**
   * Whether a pod with {@code podLabels} is one of this workload's, by its selector's labels and
   * expressions (In, NotIn, Exists, DoesNotExist, as the Kubernetes label selector documentation
   * defines them). A workload without a selector owns no pod.
   */
  public boolean selects(Map<String, String> podLabels) {
    LabelSelector selector =
        resource instanceof Deployment d
            ? d.getSpec().getSelector()
            : ((StatefulSet) resource).getSpec().getSelector();
    if (selector == null) {
      return false;
    }
    Map<String, String> labels = podLabels == null ? Map.of() : podLabels;
    boolean any = false;
    if (selector.getMatchLabels() != null) {
      any |= !selector.getMatchLabels().isEmpty();
      if (!labels.entrySet().containsAll(selector.getMatchLabels().entrySet())) {
        return false;
      }
    }
    for (LabelSelectorRequirement r :
        selector.getMatchExpressions() == null
            ? java.util.List.<LabelSelectorRequirement>of()
            : selector.getMatchExpressions()) {
      any = true;
      String value = labels.get(r.getKey());
      var values = r.getValues() == null ? java.util.List.<String>of() : r.getValues();
      boolean ok =
          switch (r.getOperator()) {
            case "In" -> value != null && values.contains(value);
            case "NotIn" -> value == null || !values.contains(value);
            case "Exists" -> value != null;
            case "DoesNotExist" -> value == null;
            default -> false;
          };
      if (!ok) {
        return false;
      }
    }
    // An empty selector would match every pod of the namespace; Kubernetes refuses one for
    // Deployments and StatefulSets, so treat it as owning none.
    return any;
  }

  /** Desired pods; Kubernetes defaults an unset count to 1. */
  public int replicas() {
    Integer r =
        resource instanceof Deployment d
            ? d.getSpec().getReplicas()
            : ((StatefulSet) resource).getSpec().getReplicas();
    return r == null ? 1 : r;
  }

  /**
   * Pods a rolling update may add beyond {@link #replicas()}. StatefulSets replace pods in place
   * and Recreate deletes before creating, so both add none.
   */
  public int surgePods() {
    if (!(resource instanceof Deployment d)) {
      return 0;
    }
    var strategy = d.getSpec().getStrategy();
    if (strategy != null && "Recreate".equals(strategy.getType())) {
      return 0;
    }
    IntOrString surge =
        strategy == null
                || strategy.getRollingUpdate() == null
                || strategy.getRollingUpdate().getMaxSurge() == null
            ? DEFAULT_MAX_SURGE
            : strategy.getRollingUpdate().getMaxSurge();
    if (surge.getIntVal() != null) {
      return surge.getIntVal();
    }
    String text = surge.getStrVal().trim();
    double percent = Double.parseDouble(text.substring(0, text.length() - 1));
    return (int) Math.ceil(replicas() * percent / PERCENT);
  }

  /** The controller reports every desired pod on the current template and available. */
  public boolean rolloutDone() {
    long generation = Objects.requireNonNullElse(resource.getMetadata().getGeneration(), 0L);
    if (resource instanceof Deployment d) {
      var s = d.getStatus();
      return s != null
          && s.getObservedGeneration() != null
          && s.getObservedGeneration() >= generation
          && eq(s.getUpdatedReplicas(), replicas())
          && eq(s.getReplicas(), replicas())
          && eq(s.getAvailableReplicas(), replicas());
    }
    var s = ((StatefulSet) resource).getStatus();
    return s != null
        && s.getObservedGeneration() != null
        && s.getObservedGeneration() >= generation
        && eq(s.getUpdatedReplicas(), replicas())
        && eq(s.getReadyReplicas(), replicas())
        && Objects.equals(s.getCurrentRevision(), s.getUpdateRevision());
  }

  /** A copy with another pod template and annotations; resourceVersion kept for the write. */
  public PoolWorkload with(PodTemplateSpec template, Map<String, String> annotations) {
    if (resource instanceof Deployment d) {
      return new PoolWorkload(
          new DeploymentBuilder(d)
              .editMetadata()
              .withAnnotations(annotations)
              .endMetadata()
              .editSpec()
              .withTemplate(template)
              .endSpec()
              .build());
    }
    return new PoolWorkload(
        new StatefulSetBuilder((StatefulSet) resource)
            .editMetadata()
            .withAnnotations(annotations)
            .endMetadata()
            .editSpec()
            .withTemplate(template)
            .endSpec()
            .build());
  }

  private static boolean eq(Integer value, int expected) {
    return (value == null ? 0 : value) == expected;
  }
}
