package dev.heapherd.engine;

import static dev.heapherd.engine.Units.GIB;
import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.util.List;
import java.util.OptionalDouble;
import org.junit.jupiter.api.Test;

class AllocatorTest {

  private static final HeapRules OPEN = new HeapRules(0, Long.MAX_VALUE, 0, 10, 0);

  private static Workload workload(
      String name, int replicas, long liveMib, long heapMib, double gcRate, HeapRules rules) {
    GcModel gc =
        PublishedRule.estimate(
            gcRate,
            0,
            heapMib * MIB,
            liveMib * MIB,
            0,
            OptionalDouble.empty(),
            OptionalDouble.empty());
    return new Workload(
        name, replicas, liveMib * MIB, liveMib * MIB, heapMib * MIB, 0, 1, gc, rules);
  }

  @Test
  void headroomGrowsWithTheSquareRootOfTheGcConstant() {
    // The square-root rule ("Optimal Heap Limits for Reducing Browser Memory Use", OOPSLA 2022):
    // with E0 = 0 and equal weights, E_i / E_j = sqrt(k_i / k_j), whatever the live sizes.
    Workload busy = workload("busy", 1, 500, 1012, 0.16, OPEN); // k = 0.16 x 512 MiB
    Workload quiet = workload("quiet", 1, 4000, 4512, 0.01, OPEN); // k = 0.01 x 512 MiB
    PoolPlan plan = Allocator.plan(List.of(busy, quiet), new Objective.Budget(10 * GIB));
    double busyExtra = plan.workloads().get(0).optimalHeapBytes() - busy.liveBytes();
    double quietExtra = plan.workloads().get(1).optimalHeapBytes() - quiet.liveBytes();
    assertThat(busyExtra / quietExtra).isCloseTo(Math.sqrt(0.16 / 0.01), within(1e-9));
  }

  @Test
  void replicasCancelPerPodButCountInTheBudget() {
    Workload one = workload("one", 1, 1000, 2000, 0.02, OPEN);
    Workload many = workload("many", 10, 1000, 2000, 0.02, OPEN);
    PoolPlan plan = Allocator.plan(List.of(one, many), new Objective.Budget(44 * 1000 * MIB));
    // Same per-pod curve: same per-pod heap, and 11 pods share 44000 MiB.
    assertThat(plan.workloads().get(0).optimalHeapBytes())
        .isCloseTo(plan.workloads().get(1).optimalHeapBytes(), within(1.0))
        .isCloseTo(4000.0 * MIB, within(1.0));
  }

  @Test
  void infeasibleBudgetKeepsEveryHeapAtItsFloorAndReportsTheMinimum() {
    HeapRules floors = new HeapRules(GIB, Long.MAX_VALUE, 0.25, 10, 64 * MIB);
    Workload a = workload("a", 2, 2000, 3000, 0.02, floors);
    Workload b = workload("b", 1, 100, 500, 0.02, floors);
    PoolPlan plan = Allocator.plan(List.of(a, b), new Objective.Budget(4 * GIB));
    assertThat(plan.feasible()).isFalse();
    // a: 2000 x 1.25 = 2500 MiB; b: the 1 GiB floor; each pod adds its 64 MiB margin.
    assertThat(plan.minimumBudgetBytes()).isEqualTo((2 * (2500 + 64) + 1024 + 64) * MIB);
    assertThat(plan.workloads()).allMatch(p -> p.heapBytes() == p.bounds().lowBytes());
    assertThat(plan.workloads()).allMatch(p -> p.bound() == Bound.FLOOR);
  }

  @Test
  void stepLimitAndCeilingBindAndSayWhich() {
    HeapRules stepped = new HeapRules(0, Long.MAX_VALUE, 0.1, 0.5, 0);
    HeapRules capped = new HeapRules(0, 1200 * MIB, 0.1, 10, 0);
    Workload starving = workload("starving", 1, 900, 1000, 0.5, stepped);
    Workload capped1 = workload("capped", 1, 900, 1000, 0.5, capped);
    Workload quiet = workload("quiet", 1, 4000, 8000, 0.0001, OPEN);
    PoolPlan plan =
        Allocator.plan(List.of(starving, capped1, quiet), new Objective.Budget(20 * GIB));
    assertThat(plan.workloads().get(0).bound()).isEqualTo(Bound.STEP);
    assertThat(plan.workloads().get(0).heapBytes()).isEqualTo(1500 * MIB);
    assertThat(plan.workloads().get(1).bound()).isEqualTo(Bound.CEILING);
    assertThat(plan.workloads().get(1).heapBytes()).isEqualTo(1200 * MIB);
    assertThat(plan.workloads().get(2).bound()).isEqualTo(Bound.NONE);
  }

  @Test
  void floorWinsOverAConflictingCeiling() {
    HeapRules conflicting = new HeapRules(0, 1000 * MIB, 0.25, 10, 0);
    Workload w = workload("w", 1, 1000, 1500, 0.01, conflicting);
    PoolPlan plan = Allocator.plan(List.of(w), new Objective.Budget(10 * GIB));
    assertThat(plan.workloads().get(0).heapBytes()).isEqualTo(1250 * MIB);
    assertThat(plan.workloads().get(0).bound()).isEqualTo(Bound.FLOOR);
  }

  @Test
  void pricesGiveTheClosedFormOptimumPerWorkload() {
    // Minimising p_m*E/GiB + p_c*k/E per pod: E = sqrt(p_c*k*GiB/p_m), by setting the derivative
    // to zero (first-order condition of a convex function of one variable).
    double memoryPerGibHour = 0.005;
    double cpuPerCoreHour = 0.04;
    Workload w = workload("w", 3, 1000, 1512, 0.03, OPEN);
    PoolPlan plan =
        Allocator.plan(List.of(w), new Objective.Prices(memoryPerGibHour, cpuPerCoreHour));
    double k = 0.03 * 512 * MIB;
    double expected = Math.sqrt(cpuPerCoreHour * k * GIB / memoryPerGibHour);
    assertThat(plan.workloads().get(0).optimalHeapBytes() - w.liveBytes())
        .isCloseTo(expected, within(1e-6 * expected));
    assertThat(plan.budgetBytes()).isEqualTo(plan.usedBytes());
  }

  @Test
  void aWorkloadWithoutHeapDependentGcKeepsTodaysHeap() {
    GcModel flat =
        PublishedRule.estimate(
            0.01, 0.01, 2 * GIB, GIB, 0, OptionalDouble.empty(), OptionalDouble.empty());
    Workload young =
        new Workload(
            "young",
            1,
            GIB,
            GIB,
            2 * GIB,
            0,
            1,
            flat,
            new HeapRules(0, Long.MAX_VALUE, 0.2, 10, 0));
    Workload busy = workload("busy", 1, 1000, 1500, 0.05, OPEN);
    PoolPlan plan = Allocator.plan(List.of(young, busy), new Objective.Budget(8 * GIB));
    assertThat(flat.estimator()).isEqualTo(GcConstantEstimator.NO_HEAP_DEPENDENT_GC);
    // Nothing predicts what a smaller heap would cost, so it is neither shrunk nor grown.
    assertThat(plan.workloads().get(0).heapBytes()).isEqualTo(2 * GIB);
    assertThat(plan.workloads().get(0).bound()).isEqualTo(Bound.KEPT);
  }

  @Test
  void aWorkloadWithNoMeasuredOldCollectionKeepsHalfItsOldHeadroom() {
    // Young collections only, as G1 on JDK 17 reports its mixed ones: the old term's constant is
    // unknown, so the heap may give up at most half of today's headroom over live bytes.
    GcModel youngOnly =
        new GcModel(
            0,
            0,
            0,
            0.001 * 300 * MIB,
            new Generations(0.3, true, 1, true),
            GcConstantEstimator.YOUNG_ONLY);
    Workload quiet =
        new Workload("quiet", 1, 200 * MIB, 200 * MIB, 1000 * MIB, 0, 1, youngOnly, OPEN);
    Workload busy = workload("busy", 1, 1000, 1500, 0.05, OPEN);
    PoolPlan plan = Allocator.plan(List.of(quiet, busy), new Objective.Budget(2500 * MIB));
    // Headroom today 800 MiB; half of it kept: 200 + 400 = 600 MiB.
    assertThat(plan.workloads().get(0).heapBytes()).isEqualTo(600 * MIB);
    assertThat(plan.workloads().get(0).bound()).isEqualTo(Bound.OLD_UNMEASURED);
  }

  @Test
  void underAFixedYoungGenerationTheOldKeepsRoomForAWholeYoungGeneration() {
    // Parallel's default split, NewRatio=2 (Java SE GC tuning guide, "Sizing the Generations"):
    // young 1/3, old 2/3. With 100 MiB live the old generation must hold 100 MiB plus a whole
    // young generation: H * (2/3 - 1/3) >= 100 MiB, so H >= 300 MiB, though 25 % headroom alone
    // would allow 188 MiB. The lab measured the need: 94 MiB live ran back-to-back full
    // collections under -Xmx192m (docs/benchmarks.md).
    Generations parallel = new Generations(1.0 / 3, false, 2.0 / 3, false);
    GcModel gc = new GcModel(0.01 * 100 * MIB, 0, 0, 0, parallel, GcConstantEstimator.HISTORY_FIT);
    HeapRules rules = new HeapRules(0, Long.MAX_VALUE, 0.25, 10, 0);
    Workload routes = new Workload("routes", 1, 100 * MIB, 100 * MIB, 400 * MIB, 0, 1, gc, rules);
    Workload busy = workload("busy", 1, 1000, 1500, 0.05, OPEN);
    PoolPlan plan = Allocator.plan(List.of(routes, busy), new Objective.Budget(1800 * MIB));
    assertThat(plan.workloads().get(0).heapBytes()).isEqualTo(300 * MIB);
    assertThat(plan.workloads().get(0).bound()).isEqualTo(Bound.PROMOTION_ROOM);

    // G1's regions serve either generation: no such floor, 25 % headroom over live is the floor.
    GcModel g1 =
        new GcModel(
            0.01 * 100 * MIB,
            0,
            0,
            0,
            new Generations(0.6, false, 1, false),
            GcConstantEstimator.HISTORY_FIT);
    Workload onG1 = new Workload("routes", 1, 100 * MIB, 100 * MIB, 400 * MIB, 0, 1, g1, rules);
    assertThat(HeapBounds.of(onG1).lowBytes()).isEqualTo(125 * MIB);
  }

  @Test
  void rejectsDuplicateNamesAndEmptyPools() {
    Workload w = workload("w", 1, 100, 200, 0.01, OPEN);
    assertThatThrownBy(() -> Allocator.plan(List.of(w, w), new Objective.Budget(GIB)))
        .hasMessageContaining("duplicate workload name: w");
    assertThatThrownBy(() -> Allocator.plan(List.of(), new Objective.Budget(GIB)))
        .isInstanceOf(IllegalArgumentException.class);
  }
}
