package dev.heapherd.engine;

import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/** A large pool's plan, its steps spread over cores, is the sequential plan to the last bit. */
class AllocatorParallelTest {

  /** Above the parallel threshold, with room for every kind of term. */
  private static final int WORKLOADS = 2 * Allocator.PARALLEL_MIN_WORKLOADS;

  @Test
  void spreadOverCoresThePlanIsTheSequentialOneExactly() {
    for (boolean generational : new boolean[] {false, true}) {
      List<Workload> pool = pool(generational);
      Objective.Budget budget = new Objective.Budget(podMemory(pool));

      PoolPlan parallel = Allocator.planUniquelyNamed(pool, budget, true);
      PoolPlan sequential = Allocator.planUniquelyNamed(pool, budget, false);

      assertThat(parallel).as("generational curves: %s", generational).isEqualTo(sequential);
      assertThat(Allocator.plan(pool, budget)).isEqualTo(sequential);
    }
  }

  @Test
  void aRepeatedNameInALargePoolIsStillRefused() {
    List<Workload> pool = new ArrayList<>(pool(false));
    Workload first = pool.get(0);
    pool.set(
        WORKLOADS - 1,
        new Workload(
            first.name(),
            first.replicas(),
            first.liveBytes(),
            first.startupLiveBytes(),
            first.currentHeapBytes(),
            first.nonHeapBytes(),
            first.weight(),
            first.gc(),
            first.rules()));

    assertThatThrownBy(() -> Allocator.plan(pool, new Objective.Budget(podMemory(pool))))
        .isInstanceOf(IllegalArgumentException.class)
        .hasMessage("duplicate workload name: w0");
  }

  /** Random pools (fixed seed); generational ones have a young and an old part each. */
  private static List<Workload> pool(boolean generational) {
    SplittableRandom random = new SplittableRandom(20261204L);
    List<Workload> pool = new ArrayList<>(WORKLOADS);
    for (int i = 0; i < WORKLOADS; i++) {
      long live = random.nextLong(32, 2048) * MIB;
      long heap = 3 * live + random.nextLong(16, 1024) * MIB;
      Generations generations =
          generational ? new Generations(1.0 / 3, false, 2.0 / 3, false) : Generations.SINGLE_SPACE;
      GcModel gc =
          new GcModel(
              random.nextDouble(1e5, 1e8),
              random.nextBoolean() ? 0 : 8 * MIB,
              random.nextDouble(0, 0.001),
              generational ? random.nextDouble(1e5, 1e8) : 0,
              generations,
              GcConstantEstimator.CURRENT_HEADROOM);
      HeapRules rules = Pools.randomRules(random);
      pool.add(
          new Workload(
              "w" + i,
              random.nextInt(1, 10),
              live,
              live,
              heap,
              random.nextLong(64, 512) * MIB,
              random.nextInt(1, 4),
              gc,
              rules));
    }
    return pool;
  }

  private static long podMemory(List<Workload> pool) {
    long total = 0;
    for (Workload w : pool) {
      total += w.replicas() * (w.currentHeapBytes() + w.podOverheadBytes());
    }
    return total;
  }
}
