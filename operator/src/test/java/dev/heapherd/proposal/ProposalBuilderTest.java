package dev.heapherd.proposal;

import static dev.heapherd.engine.Units.GIB;
import static org.assertj.core.api.Assertions.assertThat;

import dev.heapherd.engine.PoolPlan;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.PoolFileReader;
import dev.heapherd.input.Snapshot;
import dev.heapherd.input.SnapshotReader;
import dev.heapherd.plan.Planner;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The one entry point that sizes a pool, as `plan` enters it: from measurements alone. */
class ProposalBuilderTest {

  private static final Path EXAMPLES = Path.of("..", "docs", "examples");
  private static final Path POOL = EXAMPLES.resolve("pool.yaml");

  @Test
  void measurementsAloneGiveTheEnginesPlanWithNothingReserved() throws Exception {
    PoolFile pool = PoolFileReader.read(POOL);
    Path snapshotPath = EXAMPLES.resolve("snapshot.yaml");
    Snapshot snapshot = SnapshotReader.read(snapshotPath);

    ProposalBuilder.Result result =
        ProposalBuilder.fromMeasurements(pool, POOL.toString(), snapshot, snapshotPath.toString());

    PoolPlan engine = Planner.plan(pool, POOL.toString(), snapshot, snapshotPath.toString());
    assertThat(result.plan()).isEqualTo(engine);
    assertThat(result.targets())
        .containsOnlyKeys(snapshot.workloads().stream().map(Snapshot.Workload::name).toList());
    assertThat(result.proposal().hash).matches("[0-9a-f]{16}");
    assertThat(result.proposal().memoryBudget).isEqualTo("72Gi");
  }

  @Test
  void aHeldWorkloadKeepsWhatTheSnapshotSaysItHolds(@TempDir Path dir) throws Exception {
    PoolFile pool = PoolFileReader.read(POOL);
    Path snapshotPath = dir.resolve("snapshot.yaml");
    Files.writeString(
        snapshotPath,
        Files.readString(EXAMPLES.resolve("snapshot.yaml"))
            + "held:\n"
            + "  - name: fare-cache\n"
            + "    reason: restarted in the window\n"
            + "    memoryBytes: 6Gi\n");
    Snapshot snapshot = SnapshotReader.read(snapshotPath);

    ProposalBuilder.Result result =
        ProposalBuilder.fromMeasurements(pool, POOL.toString(), snapshot, snapshotPath.toString());

    assertThat(result.plan())
        .isEqualTo(Planner.plan(pool, POOL.toString(), snapshot, snapshotPath.toString()));
    // The example's budget is 72Gi; the held workload keeps 6Gi of it.
    assertThat(result.plan().usedBytes()).isLessThanOrEqualTo(66 * GIB);
    assertThat(result.proposal().held).extracting(h -> h.name).containsExactly("fare-cache");
  }
}
