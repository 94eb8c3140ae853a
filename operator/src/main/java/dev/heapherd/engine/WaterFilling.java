package dev.heapherd.engine;

import java.util.Arrays;
import java.util.SplittableRandom;

/**
 * Exact solver for {@code sum n_i * clamp(a_i + c*r_i, lo_i, hi_i) = target} over {@code c >= 0}.
 *
 * <p>The left side is piecewise linear and non-decreasing in {@code c} with breakpoints where a
 * term meets a bound. The search finds the linear piece that holds the target among the
 * breakpoints; on that piece the level is solved in closed form, so the answer is exact up to
 * floating-point rounding, not an iteration to a tolerance.
 */
final class WaterFilling {

  /** Fixed seed for pivot choice: the answer is unique, the seed only keeps runs repeatable. */
  private static final long PIVOT_SEED = 0x5eed;

  /** Pivots per sweep: enough to narrow fast, few enough that a sweep stays cheap. */
  private static final int PIVOTS = 3;

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
   *
   * <p>Narrows an interval {@code [lower, upper]} of levels that holds the answer, pivoting on
   * randomly chosen breakpoints inside it (as quickselect does, with several pivots per sweep).
   * Terms whose state no longer changes inside the interval fold into a constant and a slope, so
   * every round works only on the terms that still have a breakpoint inside: expected O(n) work in
   * all. When none is left the total is linear on the interval and the level follows in closed
   * form.
   */
  double levelFor(double target) {
    // Working copies of the terms that still matter, compacted in place every round so the hot
    // loops run over contiguous arrays.
    int size = 0;
    double[] a = new double[base.length];
    double[] r = new double[base.length];
    double[] n = new double[base.length];
    double[] lo = new double[base.length];
    double[] hi = new double[base.length];
    double[] toLow = new double[base.length];
    double[] toHigh = new double[base.length];
    double constant = 0;
    double slopeSum = 0;
    double upper = 0;
    double allHigh = 0;
    for (int i = 0; i < base.length; i++) {
      if (slope[i] > 0) {
        allHigh += count[i] * high[i];
        a[size] = base[i];
        r[size] = slope[i];
        n[size] = count[i];
        lo[size] = low[i];
        hi[size] = high[i];
        toLow[size] = (low[i] - base[i]) / slope[i];
        toHigh[size] = (high[i] - base[i]) / slope[i];
        upper = Math.max(upper, toHigh[size]);
        size++;
      } else {
        constant += count[i] * heapAt(i, 0);
      }
    }
    if (size == 0 || constant + allHigh <= target) {
      return upper;
    }
    double lower = 0;
    SplittableRandom random = new SplittableRandom(PIVOT_SEED);
    while (size > 0) {
      // Several pivots per pass: one sweep over the terms narrows the interval to about
      // 1/(PIVOTS+1) of the breakpoints inside it, so few sweeps are needed.
      int pivots = Math.min(PIVOTS, size);
      double[] levels = new double[pivots];
      for (int p = 0; p < pivots; p++) {
        int pick = random.nextInt(size);
        double breakpoint = toLow[pick] > lower ? toLow[pick] : toHigh[pick];
        // Before the first fold a term may have no breakpoint inside: keep pivots in the interval.
        levels[p] = Math.min(upper, Math.max(lower, breakpoint));
      }
      Arrays.sort(levels);
      double[] totals = new double[pivots];
      for (int j = 0; j < size; j++) {
        for (int p = 0; p < pivots; p++) {
          totals[p] += n[j] * Math.min(hi[j], Math.max(lo[j], a[j] + levels[p] * r[j]));
        }
      }
      for (int p = 0; p < pivots; p++) {
        double total = totals[p] + constant + slopeSum * levels[p];
        if (total >= target) {
          upper = levels[p];
          break;
        }
        lower = levels[p];
      }
      // Fold terms with no breakpoint strictly inside (lower, upper) into constant and slope.
      int kept = 0;
      for (int j = 0; j < size; j++) {
        if (toHigh[j] <= lower) {
          constant += n[j] * hi[j];
        } else if (toLow[j] >= upper) {
          constant += n[j] * lo[j];
        } else if (toLow[j] <= lower && toHigh[j] >= upper) {
          constant += n[j] * a[j];
          slopeSum += n[j] * r[j];
        } else {
          a[kept] = a[j];
          r[kept] = r[j];
          n[kept] = n[j];
          lo[kept] = lo[j];
          hi[kept] = hi[j];
          toLow[kept] = toLow[j];
          toHigh[kept] = toHigh[j];
          kept++;
        }
      }
      size = kept;
    }
    if (slopeSum == 0) {
      return lower;
    }
    return Math.max(lower, Math.min(upper, (target - constant) / slopeSum));
  }
}
