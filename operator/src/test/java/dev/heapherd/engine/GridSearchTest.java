package dev.heapherd.engine;

import static dev.heapherd.engine.Units.GIB;
import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * Checks the allocator against brute force: every heap combination on the whole-MiB grid (the unit
 * heaps are written in) that fits the budget, cheapest one kept.
 *
 * <p>Two tolerances. Every grid point is feasible, so the engine's exact optimum may never cost
 * more than the best of them, beyond {@link #ROUNDING}. And the best grid point may cost more than
 * the optimum only by what grid spacing explains: rounding each optimal heap down to the grid stays
 * feasible (low bounds are whole MiB) and lowers heap {@code i} by {@code d_i < 1 MiB}, so with
 * {@code u_i} its usable headroom each term {@code c_i / u_i} grows at most by the factor {@code
 * u_i / (u_i - d_i)}. The largest such factor, computed per pool, bounds the grid's excess; with
 * three workloads the third takes whatever the first two leave, which can only do better.
 */
class GridSearchTest {

  // Whole MiB: the unit heaps are written in, and the lows and highs are whole MiB.
  private static final long GRID_STEP = MIB;

  // Relative rounding in summing a few doubles; far below any real difference in cost.
  private static final double ROUNDING = 1e-12;

  // Fixed so a failure reproduces; the value itself means nothing.
  private static final long SEED = 0x6121D_5EEDL;

  private static final int TWO_WORKLOAD_POOLS = 40;
  private static final int THREE_WORKLOAD_POOLS = 20;

  // Sizes are kept modest so an exhaustive grid stays near a million points per pool at most.
  private static final int MAX_REPLICAS = 6;
  private static final double MIN_LIVE_BYTES = 64.0 * MIB;
  private static final double MAX_LIVE_BYTES = 1.0 * GIB;
  private static final double MAX_SPARE_BYTES = 2.0 * GIB;

  // Current heap is live times (1 + this).
  private static final double MIN_CURRENT_HEADROOM = 0.2;
  private static final double MAX_CURRENT_HEADROOM = 2.0;

  // GC time fraction at the current heap, 0.1 % to 20 %, which calibrates k.
  private static final double MIN_GC_FRACTION = 1e-3;
  private static final double MAX_GC_FRACTION = 0.2;

  // E0 is at most this share of the current headroom so k stays calibratable.
  private static final double MAX_OFFSET_SHARE = 0.5;

  private static final double MIN_WEIGHT = 0.5;
  private static final double MAX_WEIGHT = 2.0;

  private static final double MIN_NON_HEAP_BYTES = 32.0 * MIB;
  private static final double MAX_NON_HEAP_BYTES = 256.0 * MIB;
  private static final double MAX_MARGIN_BYTES = 32.0 * MIB;
  private static final double MAX_MIN_HEADROOM_FRACTION = 0.2;

  // An absolute floor, when set, is live times (1 + this); likewise a ceiling.
  private static final double MIN_FLOOR_HEADROOM = 0.3;
  private static final double MAX_FLOOR_HEADROOM = 1.0;
  private static final double MIN_CEILING_HEADROOM = 0.5;
  private static final double MAX_CEILING_HEADROOM = 3.0;

  // What HeapRules reads as "no ceiling", as the input layer writes it for a missing one.
  private static final long NO_CEILING_BYTES = Long.MAX_VALUE;

  // HeapRules reads a step fraction of infinity as "no step limit".
  private static final double NO_STEP_LIMIT = Double.POSITIVE_INFINITY;

  private static final double MIN_STEP_FRACTION = 0.2;
  private static final double MAX_STEP_FRACTION = 1.0;

  // Each optional rule (floor, ceiling, step limit, zero offset) is on for one draw in this many;
  // one budget in this many is more than every ceiling can use.
  private static final int RULE_ODDS = 3;
  private static final int ABOVE_CEILINGS_ODDS = 6;

  // Hand-built workloads calibrate k as a GC time fraction at this headroom, as an operator would
  // from one measurement; the fractions are a workload that wants far more heap, a light one, and
  // an idle one whose pull is negligible.
  private static final double CALIBRATION_HEADROOM_BYTES = 256.0 * MIB;
  private static final double HEAVY_GC = 0.2;
  private static final double LIGHT_GC = 0.01;
  private static final double IDLE_GC = 1e-4;
  private static final long FIXTURE_NON_HEAP_BYTES = 128 * MIB;

  @Test
  void twoWorkloadPoolsMatchExhaustiveGrid() {
    SplittableRandom random = new SplittableRandom(SEED);
    for (int instance = 0; instance < TWO_WORKLOAD_POOLS; instance++) {
      List<Workload> pool = randomPool(random, 2);
      assertMatchesGrid(pool, randomBudget(random, pool), "two-workload pool " + instance);
    }
  }

  /** Curves with a young part, solved numerically by the allocator, against the same grid. */
  @Test
  void generationalTwoWorkloadPoolsMatchExhaustiveGrid() {
    SplittableRandom random = new SplittableRandom(SEED + 2);
    for (int instance = 0; instance < TWO_WORKLOAD_POOLS; instance++) {
      List<Workload> pool =
          randomPool(random, 2).stream().map(w -> withYoungPart(random, w)).toList();
      assertMatchesGrid(pool, randomBudget(random, pool), "generational pool " + instance);
    }
  }

  @Test
  void threeWorkloadPoolsMatchGridWithRemainderToThird() {
    // A stream of its own, so adding two-workload pools leaves these unchanged.
    SplittableRandom random = new SplittableRandom(SEED + 1);
    for (int instance = 0; instance < THREE_WORKLOAD_POOLS; instance++) {
      List<Workload> pool = randomPool(random, 3);
      assertMatchesGrid(pool, randomBudget(random, pool), "three-workload pool " + instance);
    }
  }

  @Test
  void ceilingBindsTheHungryWorkload() {
    // Twenty times the GC pressure would take the hungry workload far past its 1 GiB ceiling;
    // capped there, it leaves the modest one 2 GiB, which is interior.
    Workload hungry = workload("hungry", 2, 512, 768, HEAVY_GC, rules(0, GIB, NO_STEP_LIMIT));
    Workload modest = workload("modest", 2, 512, 768, LIGHT_GC, HeapRules.unbounded());
    long budget = 2 * (GIB + 2 * GIB) + overheads(hungry, modest);
    PoolPlan plan = assertMatchesGrid(List.of(hungry, modest), budget, "ceiling");

    assertThat(plan.workloads().get(0).optimalHeapBytes()).isEqualTo((double) GIB);
    assertThat(plan.workloads().get(0).bound()).isEqualTo(Bound.CEILING);
    assertThat(plan.workloads().get(1).optimalHeapBytes()).isEqualTo(2.0 * GIB);
    assertThat(plan.workloads().get(1).bound()).isEqualTo(Bound.NONE);
  }

  @Test
  void floorHoldsTheIdleWorkload() {
    // Left to itself the idle workload would take under 100 MiB of headroom; its 768 MiB floor
    // holds it, and the busy one gets the remaining 2 GiB.
    Workload idle =
        workload("idle", 3, 256, 512, IDLE_GC, rules(768 * MIB, NO_CEILING_BYTES, NO_STEP_LIMIT));
    Workload busy = workload("busy", 1, 512, 768, HEAVY_GC, HeapRules.unbounded());
    long budget = 3 * 768 * MIB + 2 * GIB + overheads(idle, busy);
    PoolPlan plan = assertMatchesGrid(List.of(idle, busy), budget, "floor");

    assertThat(plan.workloads().get(0).optimalHeapBytes()).isEqualTo(768.0 * MIB);
    assertThat(plan.workloads().get(0).bound()).isEqualTo(Bound.FLOOR);
    assertThat(plan.workloads().get(1).optimalHeapBytes()).isEqualTo(2.0 * GIB);
    assertThat(plan.workloads().get(1).bound()).isEqualTo(Bound.NONE);
  }

  @Test
  void stepLimitCapsGrowth() {
    // A quarter of the 1 GiB current heap per step lets the heavy workload reach 1280 MiB and no
    // further, well short of what it would take; the other gets the remaining 1792 MiB.
    Workload stepped =
        workload("stepped", 2, 512, 1024, HEAVY_GC, rules(0, NO_CEILING_BYTES, 0.25));
    Workload other = workload("other", 2, 512, 768, LIGHT_GC, HeapRules.unbounded());
    long budget = 2 * 3 * GIB + overheads(stepped, other);
    PoolPlan plan = assertMatchesGrid(List.of(stepped, other), budget, "step");

    assertThat(plan.workloads().get(0).optimalHeapBytes()).isEqualTo(1280.0 * MIB);
    assertThat(plan.workloads().get(0).bound()).isEqualTo(Bound.STEP);
    assertThat(plan.workloads().get(1).optimalHeapBytes()).isEqualTo(1792.0 * MIB);
    assertThat(plan.workloads().get(1).bound()).isEqualTo(Bound.NONE);
  }

  @Test
  void budgetAboveEveryCeilingLeavesMemoryUnspent() {
    Workload a = workload("a", 2, 256, 512, LIGHT_GC, rules(0, 640 * MIB, NO_STEP_LIMIT));
    Workload b = workload("b", 3, 512, 768, LIGHT_GC, rules(0, GIB, NO_STEP_LIMIT));
    long ceilings = 2 * 640 * MIB + 3 * GIB + overheads(a, b);
    PoolPlan plan = assertMatchesGrid(List.of(a, b), ceilings + GIB, "above ceilings");

    assertThat(plan.workloads().get(0).optimalHeapBytes()).isEqualTo(640.0 * MIB);
    assertThat(plan.workloads().get(1).optimalHeapBytes()).isEqualTo((double) GIB);
    assertThat(plan.usedBytes()).isEqualTo(ceilings);
  }

  @Test
  void infeasibleBudgetKeepsEveryHeapAtItsLowBound() {
    // Low bounds: a's 600 MiB floor, and b's step limit (a tenth below its 700 MiB heap).
    Workload a =
        workload("a", 2, 300, 512, LIGHT_GC, rules(600 * MIB, NO_CEILING_BYTES, NO_STEP_LIMIT));
    Workload b = workload("b", 3, 500, 700, LIGHT_GC, rules(0, NO_CEILING_BYTES, 0.1));
    assertThat(HeapBounds.of(a).lowBytes()).isEqualTo(600 * MIB);
    assertThat(HeapBounds.of(b).lowBytes()).isEqualTo(630 * MIB);
    List<Workload> pool = List.of(a, b);
    long minimum = 0;
    for (Workload w : pool) {
      minimum += w.replicas() * (HeapBounds.of(w).lowBytes() + w.podOverheadBytes());
    }

    for (long budget : new long[] {minimum - 1, minimum - GIB}) {
      PoolPlan plan = Allocator.plan(pool, new Objective.Budget(budget));
      assertThat(plan.feasible()).as("budget %d", budget).isFalse();
      assertThat(plan.minimumBudgetBytes()).isEqualTo(minimum);
      assertThat(plan.usedBytes()).isEqualTo(minimum);
      for (WorkloadPlan p : plan.workloads()) {
        HeapBounds bounds = HeapBounds.of(p.workload());
        assertThat(p.heapBytes()).isEqualTo(bounds.lowBytes());
        assertThat(p.optimalHeapBytes()).isEqualTo((double) bounds.lowBytes());
        assertThat(p.bound()).isEqualTo(bounds.lowBound());
      }
    }

    // Exactly the minimum is feasible, and its only point is every heap at its low bound.
    PoolPlan atMinimum = assertMatchesGrid(pool, minimum, "minimum budget");
    assertThat(atMinimum.minimumBudgetBytes()).isEqualTo(minimum);
    for (WorkloadPlan p : atMinimum.workloads()) {
      assertThat(p.optimalHeapBytes()).isEqualTo((double) HeapBounds.of(p.workload()).lowBytes());
    }
  }

  /** Plans the pool, searches the grid, and asserts the two tolerances in the class comment. */
  private static PoolPlan assertMatchesGrid(List<Workload> pool, long budget, String label) {
    PoolPlan plan = Allocator.plan(pool, new Objective.Budget(budget));
    assertThat(plan.feasible()).as(label).isTrue();
    double[] optimum = new double[pool.size()];
    double spent = 0;
    double gridSlack = 0;
    for (int i = 0; i < pool.size(); i++) {
      Workload w = pool.get(i);
      HeapBounds bounds = HeapBounds.of(w);
      optimum[i] = plan.workloads().get(i).optimalHeapBytes();
      assertThat(optimum[i])
          .as(label)
          .isBetween((double) bounds.lowBytes(), (double) bounds.highBytes());
      spent += w.replicas() * (optimum[i] + w.podOverheadBytes());
      // The old headroom is below the heap, so it bounds the young term's growth as well.
      double usable = w.gc().oldHeadroomBytes(optimum[i], w.liveBytes());
      double down = optimum[i] - Math.floor(optimum[i] / GRID_STEP) * GRID_STEP;
      gridSlack = Math.max(gridSlack, down / (usable - down));
    }
    assertThat(spent).as(label).isLessThanOrEqualTo(budget * (1 + ROUNDING));

    double engine = Pools.objective(pool, optimum);
    double grid = pool.size() == 2 ? bestOfTwo(pool, budget) : bestOfThree(pool, budget);
    assertThat(engine).as(label).isLessThanOrEqualTo(grid * (1 + ROUNDING));
    assertThat(grid).as(label).isLessThanOrEqualTo(engine * (1 + gridSlack + ROUNDING));
    return plan;
  }

  /** Every pair of grid heaps within bounds and budget. */
  private static double bestOfTwo(List<Workload> pool, long budget) {
    Workload a = pool.get(0);
    Workload b = pool.get(1);
    HeapBounds boundsA = HeapBounds.of(a);
    HeapBounds boundsB = HeapBounds.of(b);
    long heapBudget = budget - overheads(a, b);
    double best = Double.POSITIVE_INFINITY;
    for (long ha = boundsA.lowBytes();
        ha <= boundsA.highBytes()
            && a.replicas() * ha + b.replicas() * boundsB.lowBytes() <= heapBudget;
        ha += GRID_STEP) {
      for (long hb = boundsB.lowBytes(); hb <= boundsB.highBytes(); hb += GRID_STEP) {
        if (a.replicas() * ha + b.replicas() * hb > heapBudget) {
          break; // larger heaps of b only spend more
        }
        best = Math.min(best, Pools.objective(pool, new double[] {ha, hb}));
      }
    }
    return best;
  }

  /**
   * Every pair of grid heaps for the first two workloads; the third gets what the budget leaves, up
   * to its high bound. Giving it less cannot help: GC cost only falls as a heap grows.
   */
  private static double bestOfThree(List<Workload> pool, long budget) {
    Workload a = pool.get(0);
    Workload b = pool.get(1);
    Workload c = pool.get(2);
    HeapBounds boundsA = HeapBounds.of(a);
    HeapBounds boundsB = HeapBounds.of(b);
    HeapBounds boundsC = HeapBounds.of(c);
    long heapBudget = budget - overheads(a, b, c);
    double best = Double.POSITIVE_INFINITY;
    long lowsOfBAndC = b.replicas() * boundsB.lowBytes() + c.replicas() * boundsC.lowBytes();
    for (long ha = boundsA.lowBytes();
        ha <= boundsA.highBytes() && a.replicas() * ha + lowsOfBAndC <= heapBudget;
        ha += GRID_STEP) {
      for (long hb = boundsB.lowBytes(); hb <= boundsB.highBytes(); hb += GRID_STEP) {
        double left = (double) (heapBudget - a.replicas() * ha - b.replicas() * hb) / c.replicas();
        if (left < boundsC.lowBytes()) {
          break; // larger heaps of b only leave less
        }
        double hc = Math.min(boundsC.highBytes(), left);
        best = Math.min(best, Pools.objective(pool, new double[] {ha, hb, hc}));
      }
    }
    return best;
  }

  private static long overheads(Workload... pool) {
    long sum = 0;
    for (Workload w : pool) {
      sum += w.replicas() * w.podOverheadBytes();
    }
    return sum;
  }

  /** A hand-built workload: weight 1, no offset, k from a GC time fraction. */
  private static Workload workload(
      String name,
      int replicas,
      long liveMib,
      long currentMib,
      double gcFraction,
      HeapRules rules) {
    GcModel gc =
        GcModel.oldOnly(
            gcFraction * CALIBRATION_HEADROOM_BYTES, 0, 0, GcConstantEstimator.CURRENT_HEADROOM);
    return new Workload(
        name,
        replicas,
        liveMib * MIB,
        liveMib * MIB,
        currentMib * MIB,
        FIXTURE_NON_HEAP_BYTES,
        1,
        gc,
        rules);
  }

  private static HeapRules rules(long floorBytes, long ceilingBytes, double stepFraction) {
    return new HeapRules(floorBytes, ceilingBytes, 0, stepFraction, 0);
  }

  /**
   * {@code w} with a young part calibrated from a GC fraction at its current heap and a G1-like
   * young share (between G1NewSizePercent 5 and G1MaxNewSizePercent 60, HotSpot defaults), or
   * Parallel-like shares (NewRatio=2, HotSpot's default) where the old generation still holds its
   * live bytes and offset.
   */
  private static Workload withYoungPart(SplittableRandom random, Workload w) {
    GcModel old = w.gc();
    double current = w.currentHeapBytes();
    boolean parallelFits = 2.0 / 3 * current > w.liveBytes() + old.offsetBytes() + MIB;
    Generations generations =
        random.nextBoolean() && parallelFits
            ? new Generations(1.0 / 3, true, 2.0 / 3, true)
            : new Generations(random.nextDouble(0.05, 0.6), true, 1, true);
    double young =
        logUniform(random, MIN_GC_FRACTION, MAX_GC_FRACTION) * generations.youngShare() * current;
    GcModel gc =
        new GcModel(
            old.constantBytes(),
            old.offsetBytes(),
            0,
            young,
            generations,
            GcConstantEstimator.CURRENT_HEADROOM);
    return new Workload(
        w.name(),
        w.replicas(),
        w.liveBytes(),
        w.startupLiveBytes(),
        w.currentHeapBytes(),
        w.nonHeapBytes(),
        w.weight(),
        gc,
        w.rules());
  }

  private static List<Workload> randomPool(SplittableRandom random, int size) {
    List<Workload> pool = new ArrayList<>(size);
    for (int i = 0; i < size; i++) {
      pool.add(randomWorkload(random, "w" + i));
    }
    return pool;
  }

  private static Workload randomWorkload(SplittableRandom random, String name) {
    long live = (long) logUniform(random, MIN_LIVE_BYTES, MAX_LIVE_BYTES);
    long current =
        (long) (live * (1 + random.nextDouble(MIN_CURRENT_HEADROOM, MAX_CURRENT_HEADROOM)));
    long offset =
        oneIn(random) ? 0 : (long) (random.nextDouble() * MAX_OFFSET_SHARE * (current - live));
    double k = logUniform(random, MIN_GC_FRACTION, MAX_GC_FRACTION) * (current - live - offset);
    GcModel gc = GcModel.oldOnly(k, offset, 0, GcConstantEstimator.CURRENT_HEADROOM);
    long floor =
        oneIn(random)
            ? (long) (live * (1 + random.nextDouble(MIN_FLOOR_HEADROOM, MAX_FLOOR_HEADROOM)))
            : 0;
    long ceiling =
        oneIn(random)
            ? NO_CEILING_BYTES
            : (long) (live * (1 + random.nextDouble(MIN_CEILING_HEADROOM, MAX_CEILING_HEADROOM)));
    double step =
        oneIn(random) ? random.nextDouble(MIN_STEP_FRACTION, MAX_STEP_FRACTION) : NO_STEP_LIMIT;
    HeapRules rules =
        new HeapRules(
            floor,
            ceiling,
            random.nextDouble() * MAX_MIN_HEADROOM_FRACTION,
            step,
            (long) (random.nextDouble() * MAX_MARGIN_BYTES));
    return new Workload(
        name,
        random.nextInt(1, MAX_REPLICAS + 1),
        live,
        live,
        current,
        (long) random.nextDouble(MIN_NON_HEAP_BYTES, MAX_NON_HEAP_BYTES),
        logUniform(random, MIN_WEIGHT, MAX_WEIGHT),
        gc,
        rules);
  }

  /** The minimum plus up to a few GiB of spare; sometimes more than every ceiling can use. */
  private static long randomBudget(SplittableRandom random, List<Workload> pool) {
    long minimum = 0;
    long ceilings = 0;
    boolean allCapped = true;
    for (Workload w : pool) {
      HeapBounds bounds = HeapBounds.of(w);
      minimum += w.replicas() * (bounds.lowBytes() + w.podOverheadBytes());
      ceilings += w.replicas() * (bounds.highBytes() + w.podOverheadBytes());
      allCapped &= w.rules().maxHeapBytes() < NO_CEILING_BYTES;
    }
    if (allCapped && random.nextInt(ABOVE_CEILINGS_ODDS) == 0) {
      return ceilings + (long) (random.nextDouble() * MAX_SPARE_BYTES);
    }
    return minimum + (long) (random.nextDouble() * MAX_SPARE_BYTES);
  }

  private static boolean oneIn(SplittableRandom random) {
    return random.nextInt(RULE_ODDS) == 0;
  }

  private static double logUniform(SplittableRandom random, double min, double max) {
    return Math.exp(random.nextDouble(Math.log(min), Math.log(max)));
  }
}
