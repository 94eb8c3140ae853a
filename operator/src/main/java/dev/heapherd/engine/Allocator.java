package dev.heapherd.engine;

import java.util.Arrays;
import java.util.List;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.CompletionException;
import java.util.function.IntConsumer;
import java.util.function.Supplier;
import java.util.stream.IntStream;

/**
 * Divides memory among a pool's workloads so that every unbounded heap sits at one marginal GC cost
 * per byte: with only the old part this is the square-root heap limit rule, {@code E_i = E0_i + c *
 * sqrt(w_i * k_i)} of headroom over live, clamped to its bounds, with one level {@code c} for the
 * pool; with a young part too the heap solves {@link MarginalFilling}'s equation. Pure: no I/O.
 *
 * <p>Over 250 lines: the sequential path and the parallel path for large pools sit side by side, so
 * that one can check they take the same steps and sum in the same order (the plans are
 * bit-identical, AllocatorParallelTest).
 */
public final class Allocator {

  /**
   * A heap this close to a bound counts as bound: far below the MiB heaps are written in, far above
   * the floating-point error of a level computed from a breakpoint.
   */
  private static final double BOUND_SNAP_BYTES = 1;

  private Allocator() {}

  /**
   * Pools at least this large spread the per-workload steps over the machine's cores. A pool of
   * 1,000 plans in under 0.2 ms (AllocatorBenchmark, 2 cores), where handing work to another thread
   * would be a real share of the time; not measured at the threshold itself. Our choice.
   */
  static final int PARALLEL_MIN_WORKLOADS = 10_000;

  /** Plans the pool. Workload names must be unique. */
  public static PoolPlan plan(List<Workload> workloads, Objective objective) {
    if (workloads.isEmpty()) {
      throw new IllegalArgumentException("a pool needs at least one workload");
    }
    if (workloads.size() < PARALLEL_MIN_WORKLOADS) {
      requireUniqueNames(workloads);
      return planUniquelyNamed(workloads, objective, false);
    }
    // The name check changes no figure, so a large pool runs it beside the arithmetic; a duplicate
    // still fails the call before any plan is returned, as it would checked first.
    CompletableFuture<Void> names = CompletableFuture.runAsync(() -> requireUniqueNames(workloads));
    try {
      return planUniquelyNamed(workloads, objective, true);
    } finally {
      awaitNameCheck(names);
    }
  }

  /** The plan of a pool whose names were checked; {@code large} spreads its steps over cores. */
  static PoolPlan planUniquelyNamed(List<Workload> workloads, Objective objective, boolean large) {
    int size = workloads.size();
    HeapBounds[] bounds = new HeapBounds[size];
    double[] low = new double[size];
    double[] high = new double[size];
    double[] count = new double[size];
    double[] live = new double[size];
    double[] thrash = new double[size];
    double[] youngPull = new double[size];
    double[] oldPull = new double[size];
    long[] podOverhead = new long[size];
    double[] none = new double[size];
    double[] one = new double[size];
    forEachWorkload(
        large,
        size,
        i -> {
          Workload w = workloads.get(i);
          bounds[i] = HeapBounds.of(w);
          low[i] = bounds[i].lowBytes();
          high[i] = bounds[i].highBytes();
          count[i] = w.replicas();
          live[i] = w.liveBytes();
          thrash[i] = w.gc().thrashingHeapBytes(w.liveBytes());
          youngPull[i] = w.youngPull();
          oldPull[i] = w.oldPull();
          podOverhead[i] = w.podOverheadBytes();
          one[i] = 1;
        });
    // Sums run in input order, so a plan is the same to the last bit however its steps ran.
    double overheadBytes = 0;
    long minimumBudget = 0;
    for (int i = 0; i < size; i++) {
      overheadBytes += count[i] * podOverhead[i];
      minimumBudget = addPods(minimumBudget, count[i], podOverhead[i], bounds[i].lowBytes());
    }
    MarginalFilling optimum = new MarginalFilling(thrash, youngPull, oldPull, low, high, count);
    WaterFilling linear = new WaterFilling(live, live, low, high, count);
    WaterFilling equal = new WaterFilling(none, one, low, high, count);

    boolean feasible;
    double level;
    // The comparison rules get the same memory the proposal may use (all of it when feasible).
    // Under a budget that is known before the proposal is solved, so a large pool solves both rules
    // on another core meanwhile.
    CompletableFuture<double[]> comparisons = null;
    if (objective instanceof Objective.Prices prices) {
      feasible = true;
      level = prices.waterLevel();
    } else {
      long budget = ((Objective.Budget) objective).bytes();
      feasible = budget >= minimumBudget;
      double comparisonTarget = feasible ? budget - overheadBytes : optimum.minimumTotal();
      comparisons = solveRules(linear, equal, comparisonTarget, large);
      level = feasible ? optimum.levelFor(budget - overheadBytes) : 0;
    }
    long[] heaps = new long[size];
    double[] optimal = new double[size];
    forEachWorkload(
        large,
        size,
        i -> {
          optimal[i] = optimum.heapAt(i, level);
          heaps[i] = roundedHeap(optimal[i], bounds[i]);
        });
    long used = 0;
    for (int i = 0; i < size; i++) {
      used = addPods(used, count[i], podOverhead[i], heaps[i]);
    }
    // Under prices the pool's size is what the prices chose.
    long budget = objective instanceof Objective.Budget fixed ? fixed.bytes() : used;
    if (comparisons == null) {
      // Prices are always feasible: the pool's memory is what the proposal uses.
      comparisons = solveRules(linear, equal, budget - overheadBytes, false);
    }
    double[] levels = comparisons.join();
    double linearLevel = levels[0];
    double equalLevel = levels[1];

    WorkloadPlan[] plans = new WorkloadPlan[size];
    forEachWorkload(
        large,
        size,
        i -> {
          Workload w = workloads.get(i);
          long linearHeap = roundedHeap(linear.heapAt(i, linearLevel), bounds[i]);
          long equalHeap = roundedHeap(equal.heapAt(i, equalLevel), bounds[i]);
          GcForecast forecast =
              new GcForecast(
                  w.gcSecondsPerHour(w.currentHeapBytes()),
                  w.gcSecondsPerHour(heaps[i]),
                  w.gcSecondsPerHour(linearHeap),
                  w.gcSecondsPerHour(equalHeap));
          Bound bound = feasible ? boundAt(optimal[i], bounds[i]) : bounds[i].lowBound();
          plans[i] =
              new WorkloadPlan(
                  w,
                  bounds[i],
                  optimal[i],
                  heaps[i],
                  heaps[i] + podOverhead[i],
                  bound,
                  linearHeap,
                  equalHeap,
                  forecast);
        });
    double currentTotal = 0;
    double proposedTotal = 0;
    double linearTotal = 0;
    double equalTotal = 0;
    for (WorkloadPlan plan : plans) {
      currentTotal += plan.gcSecondsPerHour().current();
      proposedTotal += plan.gcSecondsPerHour().proposed();
      linearTotal += plan.gcSecondsPerHour().linearRule();
      equalTotal += plan.gcSecondsPerHour().equalSplit();
    }
    return new PoolPlan(
        objective,
        budget,
        feasible,
        minimumBudget,
        used,
        level,
        Arrays.asList(plans),
        new GcForecast(currentTotal, proposedTotal, linearTotal, equalTotal));
  }

  /**
   * The linear rule's and the equal split's levels for {@code heapTarget}: one after the other on
   * another core for a large pool, else at once.
   */
  private static CompletableFuture<double[]> solveRules(
      WaterFilling linear, WaterFilling equal, double heapTarget, boolean large) {
    Supplier<double[]> both =
        () -> new double[] {linear.levelFor(heapTarget), equal.levelFor(heapTarget)};
    return large
        ? CompletableFuture.supplyAsync(both)
        : CompletableFuture.completedFuture(both.get());
  }

  /** Waits for the name check, rethrowing its refusal as it would have been thrown inline. */
  private static void awaitNameCheck(CompletableFuture<Void> names) {
    try {
      names.join();
    } catch (CompletionException e) {
      if (e.getCause() instanceof IllegalArgumentException refused) {
        throw refused;
      }
      throw e;
    }
  }

  /**
   * Runs {@code step} for every workload index, on all cores for large pools. Each step writes only
   * its own index's slots, so the order they run in changes nothing.
   */
  private static void forEachWorkload(boolean large, int size, IntConsumer step) {
    IntStream indexes = IntStream.range(0, size);
    (large ? indexes.parallel() : indexes).forEach(step);
  }

  /**
   * {@code total} plus {@code replicas} pods of {@code heapBytes} and {@code podOverheadBytes}
   * each, refusing to overflow.
   */
  private static long addPods(long total, double replicas, long podOverheadBytes, long heapBytes) {
    try {
      long pods = Math.multiplyExact((long) replicas, Math.addExact(heapBytes, podOverheadBytes));
      return Math.addExact(total, pods);
    } catch (ArithmeticException e) {
      throw new IllegalArgumentException("the pool's memory does not fit in 8 EiB");
    }
  }

  private static Bound boundAt(double optimalHeapBytes, HeapBounds bounds) {
    if (bounds.lowBound() == Bound.KEPT) {
      return Bound.KEPT;
    }
    if (bounds.lowBytes() == bounds.highBytes()
        || optimalHeapBytes <= bounds.lowBytes() + BOUND_SNAP_BYTES) {
      return bounds.lowBound();
    }
    return optimalHeapBytes >= bounds.highBytes() - BOUND_SNAP_BYTES
        ? bounds.highBound()
        : Bound.NONE;
  }

  /** Whole MiB at or below the exact heap, kept within bounds (which are whole MiB). */
  private static long roundedHeap(double heapBytes, HeapBounds bounds) {
    long rounded = Units.roundDownToMib(heapBytes);
    return Math.min(bounds.highBytes(), Math.max(bounds.lowBytes(), rounded));
  }

  /**
   * Refuses a repeated name. An open-addressing table of the names themselves, probed linearly: one
   * array and the strings' cached hashes, where a hash set would allocate a node per name.
   */
  private static void requireUniqueNames(List<Workload> workloads) {
    int capacity = Integer.highestOneBit(Math.max(2, workloads.size()) * 2 - 1) << 1;
    String[] table = new String[capacity];
    int mask = capacity - 1;
    for (Workload w : workloads) {
      String name = w.name();
      int h = name.hashCode();
      // Spread the high bits into the low ones the mask keeps (as java.util.HashMap does).
      int slot = (h ^ (h >>> 16)) & mask;
      while (table[slot] != null) {
        if (table[slot].equals(name)) {
          throw new IllegalArgumentException("duplicate workload name: " + name);
        }
        slot = (slot + 1) & mask;
      }
      table[slot] = name;
    }
  }
}
