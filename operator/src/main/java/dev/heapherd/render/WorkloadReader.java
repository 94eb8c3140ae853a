package dev.heapherd.render;

import com.fasterxml.jackson.databind.JsonMappingException;
import com.fasterxml.jackson.databind.JsonNode;
import dev.heapherd.input.ErrorText;
import dev.heapherd.input.InputException;
import dev.heapherd.input.ObjectNames;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Snapshot;
import dev.heapherd.observe.Observer;
import dev.heapherd.observe.PoolWorkload;
import dev.heapherd.rollout.PodTemplates;
import dev.heapherd.rollout.WorkloadState;
import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.api.model.PodTemplateSpec;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.apps.StatefulSet;
import io.fabric8.kubernetes.client.utils.KubernetesSerialization;
import java.time.Instant;
import java.util.List;
import java.util.Optional;

/** Reads a manifest document as a workload heapherd can resize, and its state as written. */
final class WorkloadReader {

  private static final KubernetesSerialization KUBERNETES = new KubernetesSerialization();

  private WorkloadReader() {}

  /** The document as a workload whose chosen container heapherd can resize. */
  static PoolWorkload read(
      ManifestFile file, ManifestFile.Document d, Snapshot snapshot, PoolFile.Rollout rollout)
      throws InputException {
    JsonNode tree = d.tree().orElseThrow();
    String kind = tree.path("kind").asText();
    String name = tree.path("metadata").path("name").asText();
    String where = "line " + d.contentLine();
    if (name.isEmpty()) {
      throw new InputException(file.name(), where, kind + " without metadata.name");
    }
    if (!ObjectNames.valid(name)) {
      // The API server would refuse it, and it would be printed in tables and reports.
      throw new InputException(
          file.name(),
          where,
          kind
              + " metadata.name "
              + ErrorText.quoted(name)
              + " is not a valid Kubernetes name (lower-case letters, digits, '-' and '.')");
    }
    HasMetadata resource;
    try {
      resource =
          "Deployment".equals(kind)
              ? KUBERNETES.convertValue(tree, Deployment.class)
              : KUBERNETES.convertValue(tree, StatefulSet.class);
    } catch (IllegalArgumentException e) {
      throw new InputException(file.name(), where, kind + " " + name + ": " + problem(e));
    }
    if (!hasPodSpec(resource)) {
      throw new InputException(
          file.name(), where, kind + " " + name + ": has no pod template (spec.template.spec)");
    }
    replicasFromMetrics(resource, snapshot);
    PoolWorkload w = new PoolWorkload(resource);
    var settings = settings(w.template(), rollout);
    if (settings.isEmpty()) {
      throw error(
          file,
          d,
          w,
          rollout.containerName().isEmpty()
              ? "has no containers"
              : "has no container named \""
                  + rollout.containerName()
                  + "\" (spec.rollout.containerName)");
    }
    if (settings.get().containerName() == null) {
      throw error(file, d, w, "its first container has no name");
    }
    if (settings.get().jvmOptionsFromReference()) {
      throw error(
          file,
          d,
          w,
          "takes "
              + rollout.jvmOptionsVariable()
              + " from a reference (ConfigMap, Secret or field); heapherd writes only literal"
              + " values");
    }
    return w;
  }

  /** The workload's state as its manifest sets it. */
  static WorkloadState observe(
      ManifestWorkload f, List<ManifestFile> files, PoolFile.Rollout rollout)
      throws InputException {
    try {
      // No pods: a manifest shows no rollout in progress, so none can be failing or finish.
      return Observer.observe(f.workload(), List.of(), rollout, Instant.EPOCH);
    } catch (IllegalArgumentException | IndexOutOfBoundsException e) {
      // A size or surge that does not parse; the API server would refuse it too.
      ManifestFile file = files.get(f.file());
      throw error(
          file,
          file.documents().get(f.document()),
          f.workload(),
          "cannot be read: " + e.getMessage());
    }
  }

  /** The memory settings of the container the rollout resizes, empty when there is none. */
  static Optional<PodTemplates.MemorySettings> settings(
      PodTemplateSpec template, PoolFile.Rollout rollout) {
    return PodTemplates.read(template, rollout.containerName(), rollout.jvmOptionsVariable());
  }

  /** A problem with workload {@code w}, at the line of its document. */
  static InputException error(
      ManifestFile file, ManifestFile.Document d, PoolWorkload w, String problem) {
    return new InputException(
        file.name(), "line " + d.contentLine(), w.kind() + " " + w.name() + ": " + problem);
  }

  private static boolean hasPodSpec(HasMetadata resource) {
    var spec =
        resource instanceof Deployment d
            ? (d.getSpec() == null ? null : d.getSpec().getTemplate())
            : (((StatefulSet) resource).getSpec() == null
                ? null
                : ((StatefulSet) resource).getSpec().getTemplate());
    return spec != null && spec.getSpec() != null;
  }

  /**
   * A manifest without spec.replicas leaves the count to a controller that scales the workload; the
   * pods measured are then the best count. The operator reads the live object, where the field is
   * always set.
   */
  private static void replicasFromMetrics(HasMetadata resource, Snapshot snapshot) {
    String name = resource.getMetadata().getName();
    snapshot.workloads().stream()
        .filter(m -> m.name().equals(name))
        .findFirst()
        .ifPresent(
            m -> {
              if (resource instanceof Deployment d && d.getSpec().getReplicas() == null) {
                d.getSpec().setReplicas(m.replicas());
              } else if (resource instanceof StatefulSet s && s.getSpec().getReplicas() == null) {
                s.getSpec().setReplicas(m.replicas());
              }
            });
  }

  /** Jackson's own words and the field they are about, without the Java types' chain. */
  private static String problem(IllegalArgumentException e) {
    for (Throwable t = e; t != null; t = t.getCause()) {
      if (t instanceof JsonMappingException m) {
        StringBuilder at = new StringBuilder();
        for (JsonMappingException.Reference r : m.getPath()) {
          if (r.getFieldName() != null) {
            at.append(at.length() == 0 ? "" : ".").append(r.getFieldName());
          } else {
            at.append('[').append(r.getIndex()).append(']');
          }
        }
        String message = m.getOriginalMessage().lines().findFirst().orElse("");
        return at.length() == 0 ? message : at + ": " + message;
      }
    }
    return e.getMessage().lines().findFirst().orElse("");
  }
}
