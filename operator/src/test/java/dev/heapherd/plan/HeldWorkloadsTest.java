package dev.heapherd.plan;

import static dev.heapherd.engine.Units.GIB;
import static org.assertj.core.api.Assertions.assertThat;

import dev.heapherd.engine.PoolPlan;
import dev.heapherd.engine.WorkloadPlan;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.PoolFileReader;
import dev.heapherd.input.Snapshot;
import dev.heapherd.input.SnapshotReader;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Held workloads keep their containers, so the budget left for the others shrinks by them. */
class HeldWorkloadsTest {

  private static final Path EXAMPLES = Path.of("..", "docs", "examples");

  @Test
  void heldMemoryIsTakenFromTheBudgetAndShownInThePoolFigures(@TempDir Path dir) throws Exception {
    Path snapshotPath = dir.resolve("snapshot.yaml");
    Files.writeString(
        snapshotPath,
        Files.readString(EXAMPLES.resolve("snapshot.yaml"))
            + "held:\n"
            + "  - name: fare-cache\n"
            + "    reason: restarted in the window\n"
            + "    memoryBytes: 6Gi\n");
    Path poolPath = EXAMPLES.resolve("pool.yaml");
    PoolFile pool = PoolFileReader.read(poolPath);
    Snapshot snapshot = SnapshotReader.read(snapshotPath);
    PoolPlan plan = Planner.plan(pool, poolPath.toString(), snapshot, snapshotPath.toString());
    PlanDocument doc = PlanDocument.of(pool, snapshot, plan);

    long measuredPods = 0;
    for (WorkloadPlan p : plan.workloads()) {
      measuredPods += p.workload().replicas() * p.limitBytes();
    }
    // The example's budget is 72Gi; the held workload keeps 6Gi of it.
    assertThat(measuredPods).isLessThanOrEqualTo(66 * GIB);
    assertThat(doc.heldMemoryBytes()).isEqualTo(6 * GIB);
    assertThat(doc.budgetBytes()).isEqualTo(72 * GIB);
    assertThat(doc.usedBytes()).isEqualTo(measuredPods + 6 * GIB).isLessThanOrEqualTo(72 * GIB);
    assertThat(PlanTable.render(doc))
        .contains("Held, sizes unchanged: fare-cache: restarted in the window")
        .doesNotContain("memory is unknown");
  }

  @Test
  void aHeldReasonIsPrintedOnOneLineWithItsControlCharactersEscaped(@TempDir Path dir)
      throws Exception {
    Path snapshotPath = dir.resolve("snapshot.yaml");
    // A reason is free text from a file or Prometheus: a terminal escape or a line break in it
    // must not colour the terminal or forge a line of the table.
    Files.writeString(
        snapshotPath,
        Files.readString(EXAMPLES.resolve("snapshot.yaml"))
            + "held:\n"
            + "  - name: fare-cache\n"
            + "    reason: \"restarted\\e[31m\\nHeld, sizes unchanged: forged\"\n");
    Path poolPath = EXAMPLES.resolve("pool.yaml");
    PoolFile pool = PoolFileReader.read(poolPath);
    Snapshot snapshot = SnapshotReader.read(snapshotPath);
    PlanDocument doc =
        PlanDocument.of(
            pool,
            snapshot,
            Planner.plan(pool, poolPath.toString(), snapshot, snapshotPath.toString()));

    String table = PlanTable.render(doc);
    assertThat(table)
        .doesNotContain("\u001b")
        .contains(
            "Held, sizes unchanged: fare-cache: restarted\\u001b[31m\\nHeld, sizes unchanged: forged\n");
  }
}
