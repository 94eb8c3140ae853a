package dev.heapherd.render;

import com.fasterxml.jackson.databind.JsonNode;
import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Snapshot;
import dev.heapherd.input.SnapshotReader;
import dev.heapherd.observe.PoolWorkload;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;

/** Selects the pool's workloads from the manifest files by kind, namespace and labels. */
final class PoolSelector {

  /** The API version of Deployments and StatefulSets; every supported Kubernetes serves it. */
  private static final String APPS_V1 = "apps/v1";

  private PoolSelector() {}

  /**
   * The pool's workloads in the manifests, sorted by name, each checked to be resizable; every
   * override of the pool must name one of them.
   *
   * @param poolSource names the pool file in errors
   * @param namespace the pool's namespace; manifests without one count as in it
   * @param folder names the manifests folder in errors
   */
  static List<ManifestWorkload> select(
      PoolFile pool,
      String poolSource,
      Snapshot snapshot,
      String namespace,
      String folder,
      List<ManifestFile> files)
      throws InputException {
    Map<String, ManifestWorkload> byName = new LinkedHashMap<>();
    for (int i = 0; i < files.size(); i++) {
      ManifestFile file = files.get(i);
      for (int j = 0; j < file.documents().size(); j++) {
        ManifestFile.Document d = file.documents().get(j);
        if (d.tree().isEmpty() || !selects(pool, namespace, d.tree().get())) {
          continue;
        }
        PoolWorkload w = WorkloadReader.read(file, d, snapshot, pool.rollout());
        ManifestWorkload earlier = byName.get(w.name());
        if (earlier != null) {
          ManifestFile other = files.get(earlier.file());
          throw WorkloadReader.error(
              file,
              d,
              w,
              "the pool already has a "
                  + earlier.workload().kind()
                  + " of this name in "
                  + other.name()
                  + " line "
                  + other.documents().get(earlier.document()).contentLine()
                  + "; workloads are told apart by name, so give --manifests one copy of each");
        }
        byName.put(w.name(), new ManifestWorkload(i, j, w));
      }
    }
    if (byName.isEmpty()) {
      throw new InputException(
          poolSource,
          "spec.selector.matchLabels",
          "no Deployment or StatefulSet in "
              + folder
              + (namespace.isEmpty() ? " without a namespace" : " in namespace " + namespace)
              + " carries the labels "
              + new TreeMap<>(pool.matchLabels()));
    }
    for (int i = 0; i < pool.overrides().size(); i++) {
      String name = pool.overrides().get(i).name();
      if (!byName.containsKey(name)) {
        throw new InputException(
            poolSource,
            "spec.overrides[" + i + "].name",
            "workload \"" + name + "\" is not among the pool's workloads in " + folder);
      }
    }
    return byName.values().stream().sorted(Comparator.comparing(f -> f.workload().name())).toList();
  }

  /** An apps/v1 Deployment or StatefulSet of the namespace that carries every label asked for. */
  private static boolean selects(PoolFile pool, String namespace, JsonNode doc) {
    if (!APPS_V1.equals(doc.path("apiVersion").asText())
        || !SnapshotReader.KINDS.contains(doc.path("kind").asText())) {
      return false;
    }
    String ns = doc.path("metadata").path("namespace").asText();
    if (!ns.isEmpty() && !ns.equals(namespace)) {
      return false;
    }
    JsonNode labels = doc.path("metadata").path("labels");
    return pool.matchLabels().entrySet().stream()
        .allMatch(
            l ->
                labels.path(l.getKey()).isValueNode()
                    && labels.path(l.getKey()).asText().equals(l.getValue()));
  }
}
