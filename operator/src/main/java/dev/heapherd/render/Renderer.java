package dev.heapherd.render;

import dev.heapherd.engine.PoolPlan;
import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Snapshot;
import dev.heapherd.plan.PlanDocument;
import dev.heapherd.proposal.ProposalBuilder;
import dev.heapherd.rollout.WorkloadState;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.OptionalLong;
import java.util.Set;
import java.util.stream.Stream;

/**
 * Plans a pool over the Deployments and StatefulSets found in a folder of manifests and writes the
 * new heaps and limits into their pod templates, exactly as the operator would size them.
 */
public final class Renderer {

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
   * @param review the plan as {@code plan -o json} and the review page show it
   */
  public record Outcome(
      List<Change> changes,
      List<Kept> kept,
      List<String> unplanned,
      List<ManifestFile> files,
      Set<String> changedFiles,
      PoolPlan plan,
      PlanDocument review) {}

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
    List<ManifestWorkload> found =
        PoolSelector.select(pool, poolSource, snapshot, namespace, folder, files);
    PoolFile.Rollout rollout = pool.rollout();
    Map<String, WorkloadState> states = new LinkedHashMap<>();
    Map<String, String> kinds = new LinkedHashMap<>();
    for (ManifestWorkload f : found) {
      states.put(f.workload().name(), WorkloadReader.observe(f, files, rollout));
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
    // Decide every workload first: the budget can hold back a change, whose file must then stay.
    WorkloadDecider.Result decided = WorkloadDecider.decide(pool, found, states, proposal);
    ManifestEditor.Result edited = ManifestEditor.apply(files, decided.resizes(), rollout);
    List<Kept> kept =
        Stream.concat(decided.kept().stream(), edited.kept().stream())
            .sorted(Comparator.comparing(Kept::name))
            .toList();
    Set<String> names = states.keySet();
    List<String> unplanned =
        Stream.concat(
                snapshot.workloads().stream().map(Snapshot.Workload::name),
                snapshot.held().stream().map(Snapshot.Held::name))
            .filter(n -> !names.contains(n))
            .sorted()
            .toList();
    return new Outcome(
        edited.changes(),
        kept,
        unplanned,
        edited.files(),
        edited.changedFiles(),
        proposal.plan(),
        proposal.document(pool));
  }
}
