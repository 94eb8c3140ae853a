package dev.heapherd.engine;

import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;

/**
 * Divides memory among a pool's workloads so that every unbounded heap sits at one marginal GC cost
 * per byte: with only the old part this is the square-root heap limit rule, {@code E_i = E0_i + c *
 * sqrt(w_i * k_i)} of headroom over live, clamped to its bounds, with one level {@code c} for the
 * pool; with a young part too the heap solves {@link MarginalFilling}'s equation. Pure: no I/O.
 */
public final class Allocator {

  /**
   * A heap this close to a bound counts as bound: far below the MiB heaps are written in, far above
   * the floating-point error of a level computed from a breakpoint.
   */
  private static final double BOUND_SNAP_BYTES = 1;

  private Allocator() {}

  /** Plans the pool. Workload names must be unique. */
  public static PoolPlan plan(List<Workload> workloads, Objective objective) {
    if (workloads.isEmpty()) {
      throw new IllegalArgumentException("a pool needs at least one workload");
    }
    requireUniqueNames(workloads);
    int size = workloads.size();
    HeapBounds[] bounds = new HeapBounds[size];
    double[] low = new double[size];
    double[] high = new double[size];
    double[] count = new double[size];
    double[] live = new double[size];
    double[] thrash = new double[size];
    double[] youngPull = new double[size];
    double[] oldPull = new double[size];
    double[] none = new double[size];
    double[] one = new double[size];
    double overheadBytes = 0;
    long minimumBudget = 0;
    for (int i = 0; i < size; i++) {
      Workload w = workloads.get(i);
      bounds[i] = HeapBounds.of(w);
      low[i] = bounds[i].lowBytes();
      high[i] = bounds[i].highBytes();
      count[i] = w.replicas();
      live[i] = w.liveBytes();
      thrash[i] = w.gc().thrashingHeapBytes(w.liveBytes());
      youngPull[i] = w.youngPull();
      oldPull[i] = w.oldPull();
      one[i] = 1;
      overheadBytes += (double) w.replicas() * w.podOverheadBytes();
      minimumBudget = addPods(minimumBudget, w, bounds[i].lowBytes());
    }
    MarginalFilling optimum = new MarginalFilling(thrash, youngPull, oldPull, low, high, count);

    boolean feasible;
    double level;
    if (objective instanceof Objective.Prices prices) {
      feasible = true;
      level = prices.waterLevel();
    } else {
      long budget = ((Objective.Budget) objective).bytes();
      feasible = budget >= minimumBudget;
      level = feasible ? optimum.levelFor(budget - overheadBytes) : 0;
    }
    long[] heaps = new long[size];
    double[] optimal = new double[size];
    long used = 0;
    for (int i = 0; i < size; i++) {
      optimal[i] = optimum.heapAt(i, level);
      heaps[i] = roundedHeap(optimal[i], bounds[i]);
      used = addPods(used, workloads.get(i), heaps[i]);
    }
    // Under prices the pool's size is what the prices chose.
    long budget = objective instanceof Objective.Budget fixed ? fixed.bytes() : used;

    // The comparison rules get the same memory the proposal may use (all of it when feasible).
    double heapTarget = feasible ? budget - overheadBytes : optimum.minimumTotal();
    WaterFilling linear = new WaterFilling(live, live, low, high, count);
    WaterFilling equal = new WaterFilling(none, one, low, high, count);
    double linearLevel = linear.levelFor(heapTarget);
    double equalLevel = equal.levelFor(heapTarget);

    List<WorkloadPlan> plans = new ArrayList<>(size);
    double currentTotal = 0;
    double proposedTotal = 0;
    double linearTotal = 0;
    double equalTotal = 0;
    for (int i = 0; i < size; i++) {
      Workload w = workloads.get(i);
      long linearHeap = roundedHeap(linear.heapAt(i, linearLevel), bounds[i]);
      long equalHeap = roundedHeap(equal.heapAt(i, equalLevel), bounds[i]);
      GcForecast forecast =
          new GcForecast(
              w.gcSecondsPerHour(w.currentHeapBytes()),
              w.gcSecondsPerHour(heaps[i]),
              w.gcSecondsPerHour(linearHeap),
              w.gcSecondsPerHour(equalHeap));
      currentTotal += forecast.current();
      proposedTotal += forecast.proposed();
      linearTotal += forecast.linearRule();
      equalTotal += forecast.equalSplit();
      Bound bound = feasible ? boundAt(optimal[i], bounds[i]) : bounds[i].lowBound();
      plans.add(
          new WorkloadPlan(
              w,
              bounds[i],
              optimal[i],
              heaps[i],
              heaps[i] + w.podOverheadBytes(),
              bound,
              linearHeap,
              equalHeap,
              forecast));
    }
    return new PoolPlan(
        objective,
        budget,
        feasible,
        minimumBudget,
        used,
        level,
        plans,
        new GcForecast(currentTotal, proposedTotal, linearTotal, equalTotal));
  }

  /** {@code total} plus every pod of {@code w} at {@code heapBytes}, refusing to overflow. */
  private static long addPods(long total, Workload w, long heapBytes) {
    try {
      long pods =
          Math.multiplyExact((long) w.replicas(), Math.addExact(heapBytes, w.podOverheadBytes()));
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

  private static void requireUniqueNames(List<Workload> workloads) {
    var seen = new HashSet<String>(2 * workloads.size());
    for (Workload w : workloads) {
      if (!seen.add(w.name())) {
        throw new IllegalArgumentException("duplicate workload name: " + w.name());
      }
    }
  }
}
