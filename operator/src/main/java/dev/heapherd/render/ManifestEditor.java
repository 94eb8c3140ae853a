package dev.heapherd.render;

import com.fasterxml.jackson.databind.JsonNode;
import dev.heapherd.input.PoolFile;
import dev.heapherd.rollout.PodTemplates;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;

/** Writes the decided heaps and limits into the workloads' manifest documents. */
final class ManifestEditor {

  private ManifestEditor() {}

  /**
   * The manifests after the edits.
   *
   * @param files every manifest file, those in {@code changedFiles} with their new text
   * @param changes the workloads whose manifests change, in the order they were given
   * @param changedFiles paths under the manifests folder of the files that change
   * @param kept the workloads whose documents already held the new values
   */
  record Result(
      List<ManifestFile> files,
      List<Renderer.Change> changes,
      Set<String> changedFiles,
      List<Renderer.Kept> kept) {
    Result {
      files = List.copyOf(files);
      changes = List.copyOf(changes);
      changedFiles = Collections.unmodifiableSortedSet(new TreeSet<>(changedFiles));
      kept = List.copyOf(kept);
    }
  }

  /** Writes every one of {@code resizes} into its document among {@code files}. */
  static Result apply(
      List<ManifestFile> files, List<WorkloadDecider.Resize> resizes, PoolFile.Rollout rollout) {
    List<ManifestFile> out = new ArrayList<>(files);
    List<Renderer.Change> changes = new ArrayList<>();
    Set<String> changedFiles = new TreeSet<>();
    List<Renderer.Kept> kept = new ArrayList<>();
    for (WorkloadDecider.Resize r : resizes) {
      String name = r.found().workload().name();
      // Several workloads can share a file: each edits the file as the ones before left it.
      ManifestFile file = out.get(r.found().file());
      ManifestFile.Document document = file.documents().get(r.found().document());
      DocumentPatch.Result patched =
          DocumentPatch.apply(
              file, document, edits(document.tree().orElseThrow(), rollout, r.next()));
      if (patched.text().equals(document.text())) {
        kept.add(new Renderer.Kept(name, "already at the proposed heap and limit"));
        continue;
      }
      out.set(r.found().file(), file.with(r.found().document(), patched.text()));
      changedFiles.add(file.relative());
      changes.add(
          new Renderer.Change(
              r.found().workload().kind(),
              name,
              file.relative(),
              r.state().heapBytes(),
              r.target().heapBytes(),
              r.now().limitBytes(),
              r.next().limitBytes().orElseThrow(),
              patched.rewritten()));
    }
    return new Result(out, changes, changedFiles, kept);
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
}
