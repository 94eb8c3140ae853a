package dev.heapherd.render;

import com.fasterxml.jackson.databind.JsonMappingException;
import com.fasterxml.jackson.databind.JsonNode;
import dev.heapherd.engine.Objective;
import dev.heapherd.engine.PoolPlan;
import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Quantity;
import dev.heapherd.input.Snapshot;
import dev.heapherd.input.SnapshotReader;
import dev.heapherd.reconcile.Observer;
import dev.heapherd.reconcile.PoolWorkload;
import dev.heapherd.reconcile.ProposalBuilder;
import dev.heapherd.rollout.PodTemplates;
import dev.heapherd.rollout.RolloutPlanner;
import dev.heapherd.rollout.RolloutPlanner.Target;
import dev.heapherd.rollout.WorkloadState;
import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.api.model.PodTemplateSpec;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.apps.StatefulSet;
import io.fabric8.kubernetes.client.utils.KubernetesSerialization;
import java.util.ArrayList;
import java.util.Collection;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Optional;
import java.util.OptionalLong;
import java.util.Set;
import java.util.TreeMap;
import java.util.TreeSet;
import java.util.stream.Stream;

/**
 * Plans a pool over the Deployments and StatefulSets found in a folder of manifests and writes the
 * new heaps and limits into their pod templates, exactly as the operator would size them.
 */
public final class Renderer {

  /** The API version of Deployments and StatefulSets; every supported Kubernetes serves it. */
  private static final String APPS_V1 = "apps/v1";

  private static final KubernetesSerialization KUBERNETES = new KubernetesSerialization();

  private Renderer() {}

  /**
   * A workload whose manifest changes.
   *
   * @param file the file's path under the manifests folder
   * @param heapFromBytes the -Xmx the template carried, 0 when none
   * @param limitFromBytes the container's memory limit before, empty when unset
   * @param rewritten its document was written anew rather than edited in place
   */
  public record Change(
      String kind,
      String name,
      String file,
      long heapFromBytes,
      long heapToBytes,
      OptionalLong limitFromBytes,
      long limitToBytes,
      boolean rewritten) {}

  /** A workload of the pool left as it is, and why. */
  public record Kept(String name, String reason) {}

  /**
   * What a render found and did.
   *
   * @param changes the workloads whose manifests change, by name
   * @param kept the pool's other workloads, by name
   * @param unplanned workloads in the metrics that are not among the pool's manifests
   * @param files every manifest file, those in {@code changedFiles} with their new text
   * @param changedFiles paths under the manifests folder of the files that change
   * @param plan the engine's answer
   */
  public record Outcome(
      List<Change> changes,
      List<Kept> kept,
      List<String> unplanned,
      List<ManifestFile> files,
      Set<String> changedFiles,
      PoolPlan plan) {}

  /** A workload of the pool and where its manifest is. */
  private record Found(int file, int document, PoolWorkload workload) {}

  /**
   * Renders {@code pool} into {@code files}.
   *
   * @param poolSource names the pool file in errors
   * @param snapshotSource names the metrics in errors
   * @param namespace the pool's namespace; manifests without one count as in it
   * @param folder names the manifests folder in errors
   */
  public static Outcome render(
      PoolFile pool,
      String poolSource,
      Snapshot snapshot,
      String snapshotSource,
      String namespace,
      String folder,
      List<ManifestFile> files)
      throws InputException {
    List<Found> found = find(pool, poolSource, snapshot, namespace, folder, files);
    for (int i = 0; i < pool.overrides().size(); i++) {
      String name = pool.overrides().get(i).name();
      if (found.stream().noneMatch(f -> f.workload().name().equals(name))) {
        throw new InputException(
            poolSource,
            "spec.overrides[" + i + "].name",
            "workload \"" + name + "\" is not among the pool's workloads in " + folder);
      }
    }
    PoolFile.Rollout rollout = pool.rollout();
    Map<String, WorkloadState> states = new LinkedHashMap<>();
    Map<String, String> kinds = new LinkedHashMap<>();
    for (Found f : found) {
      states.put(f.workload().name(), observe(f, files, rollout));
      kinds.put(f.workload().name(), f.workload().kind());
    }
    // The pipeline that applies the manifests paces their rollouts, not heapherd.
    ProposalBuilder.Result proposal =
        ProposalBuilder.build(
            pool,
            poolSource,
            states,
            kinds,
            snapshot,
            snapshotSource,
            snapshot.capturedAt(),
            false);
    Map<String, String> held = new LinkedHashMap<>();
    proposal.proposal().held.forEach(h -> held.put(h.name, h.reason));

    // Decide every workload first: the budget can hold back a change, whose file must then stay.
    Map<String, String> reasons = new TreeMap<>();
    List<Candidate> candidates = new ArrayList<>();
    for (Found f : found) {
      String name = f.workload().name();
      WorkloadState state = states.get(name);
      Target target = proposal.targets().get(name);
      if (held.containsKey(name)) {
        reasons.put(name, "held: " + held.get(name));
        continue;
      }
      double percent = RolloutPlanner.heapChangePercent(state, target);
      if (percent == 0 && rollout.changeThresholdPercent() > 0) {
        reasons.put(name, "already has the proposed heap");
        continue;
      }
      if (percent < rollout.changeThresholdPercent()) {
        reasons.put(
            name,
            String.format(
                Locale.ROOT,
                "a %.1f%% heap change is below the %d%% threshold",
                percent,
                rollout.changeThresholdPercent()));
        continue;
      }
      PodTemplateSpec template = f.workload().template();
      PodTemplateSpec resized =
          PodTemplates.resized(
              template,
              rollout.containerName(),
              rollout.jvmOptionsVariable(),
              target.heapBytes(),
              target.limitBytes(),
              rollout.setMemoryRequest(),
              rollout.setInitialHeap());
      candidates.add(
          new Candidate(
              f,
              state,
              target,
              settings(template, rollout).orElseThrow(),
              settings(resized, rollout).orElseThrow()));
    }
    holdOverBudget(pool, states.values(), candidates, reasons);

    List<ManifestFile> out = new ArrayList<>(files);
    List<Change> changes = new ArrayList<>();
    Set<String> changedFiles = new TreeSet<>();
    for (Candidate c : candidates) {
      String name = c.found().workload().name();
      if (reasons.containsKey(name)) {
        continue;
      }
      ManifestFile file = out.get(c.found().file());
      ManifestFile.Document document = file.documents().get(c.found().document());
      DocumentPatch.Result patched =
          DocumentPatch.apply(
              file, document, edits(document.tree().orElseThrow(), rollout, c.next()));
      if (patched.text().equals(document.text())) {
        reasons.put(name, "already at the proposed heap and limit");
        continue;
      }
      out.set(c.found().file(), file.with(c.found().document(), patched.text()));
      changedFiles.add(file.relative());
      changes.add(
          new Change(
              c.found().workload().kind(),
              name,
              file.relative(),
              c.state().heapBytes(),
              c.target().heapBytes(),
              c.now().limitBytes(),
              c.next().limitBytes().orElseThrow(),
              patched.rewritten()));
    }
    List<Kept> kept =
        reasons.entrySet().stream().map(e -> new Kept(e.getKey(), e.getValue())).toList();
    Set<String> names = states.keySet();
    List<String> unplanned =
        Stream.concat(
                snapshot.workloads().stream().map(Snapshot.Workload::name),
                snapshot.held().stream().map(Snapshot.Held::name))
            .filter(n -> !names.contains(n))
            .sorted()
            .toList();
    return new Outcome(changes, kept, unplanned, out, changedFiles, proposal.plan());
  }

  /**
   * A workload that is to change.
   *
   * @param now the chosen container's settings as written
   * @param next the same after resizing
   */
  private record Candidate(
      Found found,
      WorkloadState state,
      Target target,
      PodTemplates.MemorySettings now,
      PodTemplates.MemorySettings next) {

    /** Memory of all its pods after the change. */
    long nextBytes() {
      return (long) state.replicas()
          * (next.limitBytes().orElseThrow() + state.otherContainersBytes());
    }
  }

  /**
   * Holds back growing workloads while the pool's pods, every change written, would need more than
   * the budget. The plan fits the budget, but changes below the threshold keep their old sizes and
   * may leave too little room. Shrinking changes count first and then the smallest growths, the
   * order in which the operator starts rollouts; surge pods are not counted, as a render has no say
   * over when the changes roll.
   */
  private static void holdOverBudget(
      PoolFile pool,
      Collection<WorkloadState> states,
      List<Candidate> candidates,
      Map<String, String> reasons) {
    if (!(pool.objective() instanceof Objective.Budget budget)) {
      return;
    }
    long committed = states.stream().mapToLong(WorkloadState::steadyBytes).sum();
    List<Candidate> byGrowth =
        candidates.stream()
            .sorted(Comparator.comparingLong(c -> c.nextBytes() - c.state().steadyBytes()))
            .toList();
    for (Candidate c : byGrowth) {
      long next = committed - c.state().steadyBytes() + c.nextBytes();
      if (next > committed && next > budget.bytes()) {
        reasons.put(
            c.found().workload().name(),
            "growing it would take the pool's pods to "
                + Quantity.format(next)
                + ", over the budget of "
                + Quantity.format(budget.bytes()));
      } else {
        committed = next;
      }
    }
  }

  /** The pool's workloads in the manifests, sorted by name, each checked to be resizable. */
  private static List<Found> find(
      PoolFile pool,
      String poolSource,
      Snapshot snapshot,
      String namespace,
      String folder,
      List<ManifestFile> files)
      throws InputException {
    Map<String, Found> byName = new LinkedHashMap<>();
    for (int i = 0; i < files.size(); i++) {
      ManifestFile file = files.get(i);
      for (int j = 0; j < file.documents().size(); j++) {
        ManifestFile.Document d = file.documents().get(j);
        if (d.tree().isEmpty() || !selects(pool, namespace, d.tree().get())) {
          continue;
        }
        PoolWorkload w = workload(file, d, snapshot, pool.rollout());
        Found earlier = byName.get(w.name());
        if (earlier != null) {
          ManifestFile other = files.get(earlier.file());
          throw error(
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
        byName.put(w.name(), new Found(i, j, w));
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

  /** The document as a workload whose chosen container heapherd can resize. */
  private static PoolWorkload workload(
      ManifestFile file, ManifestFile.Document d, Snapshot snapshot, PoolFile.Rollout rollout)
      throws InputException {
    JsonNode tree = d.tree().orElseThrow();
    String kind = tree.path("kind").asText();
    String name = tree.path("metadata").path("name").asText();
    String where = "line " + d.contentLine();
    if (name.isEmpty()) {
      throw new InputException(file.name(), where, kind + " without metadata.name");
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

  private static WorkloadState observe(Found f, List<ManifestFile> files, PoolFile.Rollout rollout)
      throws InputException {
    try {
      // No pods: a manifest shows no rollout in progress, so none can be failing.
      return Observer.observe(f.workload(), List.of(), rollout);
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

  private static Optional<PodTemplates.MemorySettings> settings(
      PodTemplateSpec template, PoolFile.Rollout rollout) {
    return PodTemplates.read(template, rollout.containerName(), rollout.jvmOptionsVariable());
  }

  /** The values {@code next} holds, at their places in the document's tree. */
  private static List<DocumentPatch.Edit> edits(
      JsonNode tree, PoolFile.Rollout rollout, PodTemplates.MemorySettings next) {
    JsonNode containers = tree.path("spec").path("template").path("spec").path("containers");
    int index = 0;
    if (!rollout.containerName().isEmpty()) {
      while (!rollout.containerName().equals(containers.path(index).path("name").asText())) {
        index++;
      }
    }
    List<Object> container = List.of("spec", "template", "spec", "containers", index);
    List<DocumentPatch.Edit> edits = new ArrayList<>();
    edits.add(
        new DocumentPatch.Edit(path(container, "resources", "limits", "memory"), next.limit()));
    if (rollout.setMemoryRequest()) {
      edits.add(
          new DocumentPatch.Edit(
              path(container, "resources", "requests", "memory"), next.request()));
    }
    JsonNode env = containers.path(index).path("env");
    String variable = rollout.jvmOptionsVariable();
    List<Integer> entries = new ArrayList<>();
    for (int i = 0; i < env.size(); i++) {
      if (variable.equals(env.path(i).path("name").asText())) {
        entries.add(i);
      }
    }
    if (entries.isEmpty()) {
      // Appended, as PodTemplates appends it: name first, so the entry reads as usual.
      entries.add(env.size());
      edits.add(new DocumentPatch.Edit(path(container, "env", env.size(), "name"), variable));
    }
    for (int i : entries) {
      edits.add(new DocumentPatch.Edit(path(container, "env", i, "value"), next.jvmOptions()));
    }
    return edits;
  }

  private static List<Object> path(List<Object> base, Object... steps) {
    List<Object> out = new ArrayList<>(base);
    out.addAll(List.of(steps));
    return out;
  }

  private static InputException error(
      ManifestFile file, ManifestFile.Document d, PoolWorkload w, String problem) {
    return new InputException(
        file.name(), "line " + d.contentLine(), w.kind() + " " + w.name() + ": " + problem);
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
