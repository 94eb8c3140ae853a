package dev.heapherd.engine;

import java.util.Arrays;

/**
 * Exact solver for {@code sum n_i * clamp(a_i + c*r_i, lo_i, hi_i) = target} over {@code c >= 0}.
 *
 * <p>The left side is piecewise linear and non-decreasing in {@code c} with breakpoints where a
 * term meets a bound. Sorting the breakpoints and bisecting over their indices finds the linear
 * piece that holds the target in O(n log n); on that piece the level is solved in closed form, so
 * the answer is exact up to floating-point rounding, not an iteration to a tolerance.
 */
final class WaterFilling {

  private final double[] base;
  private final double[] slope;
  private final double[] low;
  private final double[] high;
  private final double[] count;

  /**
   * @param base a_i, the heap at level zero
   * @param slope r_i >= 0, the heap gained per unit of level
   * @param low lo_i
   * @param high hi_i >= lo_i
   * @param count n_i, the replicas each heap is paid for
   */
  WaterFilling(double[] base, double[] slope, double[] low, double[] high, double[] count) {
    this.base = base;
    this.slope = slope;
    this.low = low;
    this.high = high;
    this.count = count;
  }

  /** Heap of term {@code i} at level {@code c}. */
  double heapAt(int i, double c) {
    return Math.min(high[i], Math.max(low[i], base[i] + c * slope[i]));
  }

  /** Total {@code sum n_i * heap_i} at level {@code c}. */
  double totalAt(double c) {
    double sum = 0;
    for (int i = 0; i < base.length; i++) {
      sum += count[i] * heapAt(i, c);
    }
    return sum;
  }

  /** Total with every term at its low bound: the least any level can give. */
  double minimumTotal() {
    double sum = 0;
    for (int i = 0; i < low.length; i++) {
      sum += count[i] * low[i];
    }
    return sum;
  }

  /**
   * The smallest level whose total reaches {@code target}, or the level at which every term is at
   * its high bound when even that total stays below the target. Callers check the minimum first.
   */
  double levelFor(double target) {
    double[] breaks = breakpoints();
    if (breaks.length == 0 || totalAt(0) >= target) {
      return 0;
    }
    if (totalAt(breaks[breaks.length - 1]) <= target) {
      return breaks[breaks.length - 1];
    }
    // Invariant: totalAt(lower) < target <= totalAt(upper), with lower/upper breakpoint levels.
    double lower = 0;
    int lo = 0;
    int hi = breaks.length - 1;
    while (lo < hi) {
      int mid = (lo + hi) >>> 1;
      if (totalAt(breaks[mid]) >= target) {
        hi = mid;
      } else {
        lower = breaks[mid];
        lo = mid + 1;
      }
    }
    double upper = breaks[hi];
    double totalLower = totalAt(lower);
    double totalUpper = totalAt(upper);
    // No breakpoint lies strictly between lower and upper, so the total is linear there.
    return lower + (target - totalLower) * (upper - lower) / (totalUpper - totalLower);
  }

  private double[] breakpoints() {
    double[] breaks = new double[2 * base.length];
    int size = 0;
    for (int i = 0; i < base.length; i++) {
      if (slope[i] > 0) {
        double toLow = (low[i] - base[i]) / slope[i];
        double toHigh = (high[i] - base[i]) / slope[i];
        if (toLow > 0) {
          breaks[size++] = toLow;
        }
        if (toHigh > 0 && Double.isFinite(toHigh)) {
          breaks[size++] = toHigh;
        }
      }
    }
    double[] sorted = Arrays.copyOf(breaks, size);
    Arrays.sort(sorted);
    return sorted;
  }
}
