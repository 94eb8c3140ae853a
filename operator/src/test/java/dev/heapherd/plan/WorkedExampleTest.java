package dev.heapherd.plan;

import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.heapherd.engine.Bound;
import dev.heapherd.engine.PoolPlan;
import dev.heapherd.engine.WorkloadPlan;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.PoolFileReader;
import dev.heapherd.input.Snapshot;
import dev.heapherd.input.SnapshotReader;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;

/** Reproduces every number of docs/worked-example.md, which was computed by hand. */
class WorkedExampleTest {

  private static final Path EXAMPLES = Path.of("..", "docs", "examples");

  /** The doc prints GC seconds per hour to one decimal. */
  private static final double PRINTED_PRECISION = 0.05;

  @Test
  void planMatchesTheHandComputation() throws Exception {
    Path poolPath = EXAMPLES.resolve("worked-pool.yaml");
    Path snapshotPath = EXAMPLES.resolve("worked-snapshot.yaml");
    PoolFile pool = PoolFileReader.read(poolPath);
    Snapshot snapshot = SnapshotReader.read(snapshotPath);
    PoolPlan plan = Planner.plan(pool, poolPath.toString(), snapshot, snapshotPath.toString());

    // Step 3: c = (8716 - 5900) / 16 = 176, in units of sqrt(MiB).
    assertThat(plan.level() / Math.sqrt(MIB)).isCloseTo(176, within(1e-9));
    assertThat(plan.feasible()).isTrue();
    assertThat(plan.usedBytes()).isEqualTo(8716 * MIB).isEqualTo(plan.budgetBytes());

    check(plan.workloads().get(0), "parcel-router", 16, 1704, 1904, 288.0, 226.6, 1574);
    check(plan.workloads().get(1), "invoice-archive", 4, 2352, 2652, 17.7, 44.5, 3149);
    check(plan.workloads().get(2), "tracking-webhooks", 1, 652, 752, 63.8, 52.3, 472);

    assertThat(plan.totalGcSecondsPerHour().current()).isCloseTo(369.5, within(PRINTED_PRECISION));
    assertThat(plan.totalGcSecondsPerHour().proposed()).isCloseTo(323.4, within(PRINTED_PRECISION));
    assertThat(plan.totalGcSecondsPerHour().linearRule())
        .isCloseTo(364.2, within(PRINTED_PRECISION));
  }

  private static void check(
      WorkloadPlan p,
      String name,
      double kMib,
      long heapMib,
      long limitMib,
      double gcNow,
      double gcProposed,
      long linearHeapMib) {
    assertThat(p.workload().name()).isEqualTo(name);
    assertThat(p.workload().gc().constantBytes() / MIB).isCloseTo(kMib, within(1e-9));
    assertThat(p.heapBytes()).isEqualTo(heapMib * MIB);
    assertThat(p.limitBytes()).isEqualTo(limitMib * MIB);
    assertThat(p.bound()).isEqualTo(Bound.NONE);
    assertThat(p.gcSecondsPerHour().current()).isCloseTo(gcNow, within(PRINTED_PRECISION));
    assertThat(p.gcSecondsPerHour().proposed()).isCloseTo(gcProposed, within(PRINTED_PRECISION));
    assertThat(p.linearRuleHeapBytes()).isEqualTo(linearHeapMib * MIB);
  }
}
