package dev.heapherd.engine;

/**
 * Exact allocator for a sum of per-workload convex decreasing cost curves under one memory total.
 *
 * <p>Each term's weighted marginal GC cost per heap byte is {@code (rY/H)^2 + (rO/(H - D))^2}
 * (young part and old part of {@link GcModel}, scaled by weight). The Karush-Kuhn-Tucker conditions
 * of {@code min sum n_i w_i cost_i(H_i)} subject to {@code sum n_i H_i = target} and bounds put
 * every unbounded term at one marginal cost {@code 1/c^2}; {@code c} is the pool's level. A term
 * with one part solves in closed form ({@code H = c*rY} or {@code H = D + c*rO}), the published
 * square-root rule, and a pool of such terms is solved exactly by {@link WaterFilling}. A term with
 * both parts is solved per level by Newton's method, which converges monotonically on this convex
 * curve, and the level by bisection to {@link #LEVEL_TOLERANCE}.
 */
final class MarginalFilling {

  /**
   * Relative width of the bracket the level is narrowed to: heaps follow to about the same relative
   * error, a billionth of a byte on a GiB heap, far below the MiB heaps are written in.
   */
  static final double LEVEL_TOLERANCE = 1e-12;

  /** Newton steps per term and level: convergence is quadratic, so ten would do; a safe cap. */
  private static final int MAX_NEWTON_STEPS = 100;

  /** Bisection halvings: 2^-200 is below any tolerance a double can hold. */
  private static final int MAX_HALVINGS = 200;

  private final double[] thrash;
  private final double[] youngPull;
  private final double[] oldPull;
  private final double[] low;
  private final double[] high;
  private final double[] count;
  private final boolean singlePart;
  private final WaterFilling closedForm;

  /**
   * @param thrash D_i, the heap at which the old part becomes unbounded
   * @param youngPull rY_i >= 0
   * @param oldPull rO_i >= 0
   * @param low lo_i
   * @param high hi_i >= lo_i
   * @param count n_i, the replicas each heap is paid for
   */
  MarginalFilling(
      double[] thrash,
      double[] youngPull,
      double[] oldPull,
      double[] low,
      double[] high,
      double[] count) {
    this.thrash = thrash;
    this.youngPull = youngPull;
    this.oldPull = oldPull;
    this.low = low;
    this.high = high;
    this.count = count;
    boolean single = true;
    double[] base = new double[thrash.length];
    double[] slope = new double[thrash.length];
    for (int i = 0; i < thrash.length; i++) {
      single &= youngPull[i] == 0 || oldPull[i] == 0;
      base[i] = youngPull[i] > 0 ? 0 : thrash[i];
      slope[i] = youngPull[i] > 0 ? youngPull[i] : oldPull[i];
    }
    this.singlePart = single;
    // Built for every pool: its lows and counts also serve pools with two-part terms.
    this.closedForm = new WaterFilling(base, slope, low, high, count);
  }

  /** Heap of term {@code i} at level {@code c}, within its bounds. */
  double heapAt(int i, double c) {
    if (singlePart) {
      return closedForm.heapAt(i, c);
    }
    return Math.min(high[i], Math.max(low[i], unboundedHeap(i, c)));
  }

  /** Total with every term at its low bound: the least any level can give. */
  double minimumTotal() {
    return closedForm.minimumTotal();
  }

  /**
   * The level whose total is {@code target} (the largest within tolerance whose total does not
   * exceed it), or the level at which every term is at its high bound when even that total stays
   * below the target. Callers check the minimum first.
   */
  double levelFor(double target) {
    if (singlePart) {
      return closedForm.levelFor(target);
    }
    double upper = 0;
    for (int i = 0; i < thrash.length; i++) {
      upper = Math.max(upper, levelOf(i, high[i]));
    }
    if (totalAt(upper) <= target) {
      return upper;
    }
    double lower = 0;
    for (int step = 0; step < MAX_HALVINGS && upper - lower > LEVEL_TOLERANCE * upper; step++) {
      double mid = (lower + upper) / 2;
      if (totalAt(mid) <= target) {
        lower = mid;
      } else {
        upper = mid;
      }
    }
    return lower;
  }

  private double totalAt(double c) {
    double sum = 0;
    for (int i = 0; i < thrash.length; i++) {
      sum += count[i] * heapAt(i, c);
    }
    return sum;
  }

  /** The level at which term {@code i}'s marginal cost is reached at {@code heapBytes}. */
  private double levelOf(int i, double heapBytes) {
    double young = youngPull[i] / heapBytes;
    double old = heapBytes > thrash[i] ? oldPull[i] / (heapBytes - thrash[i]) : Double.MAX_VALUE;
    double marginal = young * young + (oldPull[i] > 0 ? old * old : 0);
    return marginal > 0 ? 1 / Math.sqrt(marginal) : 0;
  }

  /**
   * Solves {@code (rY/H)^2 + (rO/(H-D))^2 = 1/c^2}. The root lies between the heaps where each part
   * alone meets the level and {@code D + c*(rY + rO)}; Newton's method from the left end stays left
   * of the root on a convex decreasing function, so it never leaves the bracket.
   */
  private double unboundedHeap(int i, double c) {
    double ry = youngPull[i];
    double ro = oldPull[i];
    double d = thrash[i];
    if (ro == 0) {
      return c * ry;
    }
    if (ry == 0 || c == 0) {
      return d + c * ro;
    }
    double target = 1 / (c * c);
    double right = d + c * (ry + ro);
    double h = Math.max(c * ry, d + c * ro);
    for (int step = 0; step < MAX_NEWTON_STEPS; step++) {
      double young = ry / h;
      double old = ro / (h - d);
      double excess = young * young + old * old - target;
      double slope = -2 * (young * young / h + old * old / (h - d));
      double next = Math.min(right, h - excess / slope);
      if (!(next > h) || next - h <= LEVEL_TOLERANCE * h) {
        return Math.max(h, Math.min(right, next));
      }
      h = next;
    }
    return h;
  }
}
