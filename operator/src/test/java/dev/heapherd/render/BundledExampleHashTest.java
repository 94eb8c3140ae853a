package dev.heapherd.render;

import static org.assertj.core.api.Assertions.assertThat;

import dev.heapherd.input.PoolFile;
import dev.heapherd.input.PoolFileReader;
import dev.heapherd.input.Snapshot;
import dev.heapherd.input.SnapshotReader;
import dev.heapherd.proposal.ProposalBuilder;
import dev.heapherd.rollout.WorkloadState;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

/**
 * The approval hash of the bundled example (docs/examples) is pinned: an admin approves a proposal
 * by its hash, so a refactoring that changed it for the same inputs would silently void approvals
 * already written into pools and pipelines.
 */
class BundledExampleHashTest {

  private static final Path EXAMPLES = Path.of("../docs/examples");

  /**
   * Computed by the proposal code as of issue 12's start (commit 55a2110, then in package
   * reconcile) with the same inputs, and checked equal after the move into package proposal.
   */
  private static final String RENDER_HASH = "6112ac00a12f0954";

  /** The same for the operator, which also reserves room for surge pods. */
  private static final String OPERATOR_HASH = "6587e7edf09d2654";

  @Test
  void theBundledExamplesProposalKeepsItsApprovalHash() throws Exception {
    assertThat(hash(false)).as("as render plans it").isEqualTo(RENDER_HASH);
    assertThat(hash(true)).as("as the operator plans it").isEqualTo(OPERATOR_HASH);
  }

  private static String hash(boolean reserveSurge) throws Exception {
    PoolFile pool = PoolFileReader.read(EXAMPLES.resolve("pool.yaml"));
    Snapshot snapshot = SnapshotReader.read(EXAMPLES.resolve("snapshot.yaml"));
    Path manifests = EXAMPLES.resolve("manifests");
    List<ManifestFile> files = ManifestFolder.read(manifests, ManifestFolder.files(manifests));
    List<ManifestWorkload> found =
        PoolSelector.select(
            pool, "pool.yaml", snapshot, pool.namespace(), manifests.toString(), files);
    Map<String, WorkloadState> states = new LinkedHashMap<>();
    Map<String, String> kinds = new LinkedHashMap<>();
    for (ManifestWorkload f : found) {
      states.put(f.workload().name(), WorkloadReader.observe(f, files, pool.rollout()));
      kinds.put(f.workload().name(), f.workload().kind());
    }

    ProposalBuilder.Result result =
        ProposalBuilder.build(
            pool,
            "pool.yaml",
            states,
            kinds,
            snapshot,
            "snapshot.yaml",
            snapshot.capturedAt(),
            reserveSurge);
    assertThat(result.proposal().workloads).isNotEmpty();
    return result.proposal().hash;
  }
}
