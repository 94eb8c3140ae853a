package dev.heapherd.engine;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;

/**
 * Fits a workload's curve to the points of earlier heaps by bounded (non-negative) least squares:
 * the young part {@code Yy + a/(youngShare*H)} to the young GC times and the old part {@code Yo +
 * k/(oldShare*H - L - E0)} to the rest, each over {@code Yy, a, Yo, k >= 0}, and {@code E0} over a
 * grid below the smallest old headroom seen. {@code L} is the one live size the curve is evaluated
 * with, not each point's own: the live estimate of a point drifts with its heap (a larger heap is
 * collected later and floats more garbage), and a curve fitted on one live but read with another
 * misses its own points, most of all at the smallest heaps. Pure: no I/O.
 *
 * <p>Over 250 lines because the fit, its bounded least squares and the pooling of adjacent
 * violators that precedes it are one estimator, read and checked together (docs/model.md).
 */
public final class CurveFit {

  /**
   * Heaps closer than this fraction count as one: a few percent is what rounding to MiB and pool
   * accounting move a heap without anyone changing it. Our choice.
   */
  public static final double SAME_HEAP_FRACTION = 0.03;

  /** Points at distinct heaps needed to separate a heap-independent part from a heap one. */
  static final int POINTS_FOR_TWO_TERMS = 2;

  /** Points at distinct heaps needed before the offset E0 is fitted, not assumed. */
  static final int POINTS_FOR_OFFSET = 3;

  /** Offsets tried, as fractions of the smallest old headroom seen: a grid, then refined. */
  private static final int OFFSET_GRID = 40;

  /** The largest offset tried, as a fraction of the smallest old headroom seen. */
  private static final double MAX_OFFSET_SHARE = 0.9;

  private CurveFit() {}

  /** Points whose heaps differ from each other by at least {@link #SAME_HEAP_FRACTION}. */
  public static int distinctHeaps(List<CurvePoint> points) {
    List<Long> heaps = new ArrayList<>();
    for (CurvePoint p : points) {
      if (heaps.stream().noneMatch(h -> sameHeap(h, p.heapBytes()))) {
        heaps.add(p.heapBytes());
      }
    }
    return heaps.size();
  }

  /** True when two heaps count as one for fitting. */
  public static boolean sameHeap(long a, long b) {
    return Math.abs(a - b) <= SAME_HEAP_FRACTION * Math.max(a, b);
  }

  /**
   * The curve fitted to {@code all}, keeping {@code calibrated}'s shares; {@code calibrated} itself
   * when the points whose old generation holds more than {@code liveBytes} span fewer than {@link
   * #POINTS_FOR_TWO_TERMS} distinct heaps.
   *
   * @param liveBytes the live size the curve is read with (the workload's latest)
   */
  public static GcModel fit(GcModel calibrated, List<CurvePoint> all, long liveBytes) {
    Generations g = calibrated.generations();
    List<CurvePoint> points = nonIncreasing(aboveLive(all, g, liveBytes), false);
    if (distinctHeaps(points) < POINTS_FOR_TWO_TERMS) {
      return calibrated;
    }
    int n = points.size();
    double[] youngX = new double[n];
    double[] youngY = new double[n];
    for (int i = 0; i < n; i++) {
      CurvePoint p = points.get(i);
      youngX[i] = 1 / (g.youngShare() * p.heapBytes());
      youngY[i] = p.youngGcSecondsPerSecond();
    }
    Line young = nonNegativeLine(youngX, youngY);
    OldFit old = oldTerm(points, g, liveBytes, calibrated.offsetBytes(), false);
    return new GcModel(
        old.line().slope(),
        old.offsetBytes(),
        young.intercept() + old.line().intercept(),
        young.slope(),
        g,
        GcConstantEstimator.HISTORY_FIT);
  }

  /**
   * Like {@link #fit}, for a collector whose young generation gets the heap old objects leave and
   * whose young collections carry old-generation work: G1, whose regions serve either generation
   * and which reports its mixed collections as young ones on JDK 17. The whole GC time is fitted to
   * {@code Y + k/(oldShare*H - L - E0)} and the young term is dropped: measured on a paced service
   * over five heaps, G1's total GC time follows that form, not {@code a/(youngShare*H)}.
   */
  public static GcModel fitOnOldHeadroom(GcModel calibrated, List<CurvePoint> all, long liveBytes) {
    Generations g = calibrated.generations();
    List<CurvePoint> points = nonIncreasing(aboveLive(all, g, liveBytes), true);
    if (distinctHeaps(points) < POINTS_FOR_TWO_TERMS) {
      return calibrated;
    }
    OldFit total = oldTerm(points, g, liveBytes, calibrated.offsetBytes(), true);
    return new GcModel(
        total.line().slope(),
        total.offsetBytes(),
        total.line().intercept(),
        0,
        g,
        GcConstantEstimator.HISTORY_FIT);
  }

  /**
   * The points whose old generation has room above {@code liveBytes}: a heap that small cannot hold
   * today's live set, so its GC time says nothing about the curve read with it.
   */
  private static List<CurvePoint> aboveLive(
      List<CurvePoint> points, Generations g, long liveBytes) {
    return points.stream().filter(p -> headroom(p, g, liveBytes) > 0).toList();
  }

  /**
   * The points in heap order with their GC times made non-increasing in the heap, as every curve of
   * the model is: a point that measured more GC time at a larger heap than a smaller one (a noisy
   * window, a collector's phase) is pooled with its neighbours instead of bending the curve the
   * wrong way. With {@code total} the whole GC time is pooled (each part scaled alike), else the
   * young and the old part each on its own.
   */
  static List<CurvePoint> nonIncreasing(List<CurvePoint> points, boolean total) {
    List<CurvePoint> sorted =
        points.stream().sorted(Comparator.comparingLong(CurvePoint::heapBytes)).toList();
    int n = sorted.size();
    double[] young = new double[n];
    double[] old = new double[n];
    for (int i = 0; i < n; i++) {
      young[i] = sorted.get(i).youngGcSecondsPerSecond();
      old[i] = sorted.get(i).oldGcSecondsPerSecond();
    }
    List<CurvePoint> out = new ArrayList<>();
    if (total) {
      double[] sum = new double[n];
      for (int i = 0; i < n; i++) {
        sum[i] = young[i] + old[i];
      }
      double[] pooled = poolAdjacentViolators(sum);
      for (int i = 0; i < n; i++) {
        CurvePoint p = sorted.get(i);
        double scale = sum[i] > 0 ? pooled[i] / sum[i] : 0;
        out.add(
            sum[i] > 0
                ? new CurvePoint(p.heapBytes(), p.liveBytes(), young[i] * scale, old[i] * scale)
                : new CurvePoint(p.heapBytes(), p.liveBytes(), 0, pooled[i]));
      }
    } else {
      double[] y = poolAdjacentViolators(young);
      double[] o = poolAdjacentViolators(old);
      for (int i = 0; i < n; i++) {
        CurvePoint p = sorted.get(i);
        out.add(new CurvePoint(p.heapBytes(), p.liveBytes(), y[i], o[i]));
      }
    }
    return out;
  }

  /**
   * The non-increasing sequence nearest to {@code y} in least squares, by pooling adjacent
   * violators (isotonic regression; Ayer, Brunk, Ewing, Reid and Silverman, "An empirical
   * distribution function for sampling with incomplete information", Annals of Mathematical
   * Statistics, 1955): each run that rises is replaced by its mean until none does.
   */
  static double[] poolAdjacentViolators(double[] y) {
    int n = y.length;
    double[] mean = new double[n];
    int[] count = new int[n];
    int blocks = 0;
    for (double v : y) {
      mean[blocks] = v;
      count[blocks] = 1;
      blocks++;
      while (blocks > 1 && mean[blocks - 2] < mean[blocks - 1]) {
        int merged = count[blocks - 2] + count[blocks - 1];
        mean[blocks - 2] =
            (mean[blocks - 2] * count[blocks - 2] + mean[blocks - 1] * count[blocks - 1]) / merged;
        count[blocks - 2] = merged;
        blocks--;
      }
    }
    double[] out = new double[n];
    int i = 0;
    for (int b = 0; b < blocks; b++) {
      for (int c = 0; c < count[b]; c++) {
        out[i++] = mean[b];
      }
    }
    return out;
  }

  private static double headroom(CurvePoint p, Generations g, long liveBytes) {
    return g.oldShare() * p.heapBytes() - liveBytes;
  }

  private static double smallestHeadroom(List<CurvePoint> points, Generations g, long liveBytes) {
    double smallest = Double.MAX_VALUE;
    for (CurvePoint p : points) {
      smallest = Math.min(smallest, headroom(p, g, liveBytes));
    }
    return smallest;
  }

  /**
   * The old term fitted to the old GC times (or, with {@code total}, to all GC time), with {@code
   * E0} on a grid below the smallest headroom seen once the points span enough heaps.
   */
  private static OldFit oldTerm(
      List<CurvePoint> points,
      Generations g,
      long liveBytes,
      long calibratedOffset,
      boolean total) {
    double smallest = smallestHeadroom(points, g, liveBytes);
    // The calibrated offset was set for today's point alone; no point may sit at or below it.
    long offset = Math.min(calibratedOffset, (long) (smallest * MAX_OFFSET_SHARE));
    Line best = oldLine(points, g, liveBytes, offset, total);
    if (distinctHeaps(points) >= POINTS_FOR_OFFSET) {
      for (int step = 0; step < OFFSET_GRID; step++) {
        long tried = (long) (smallest * MAX_OFFSET_SHARE * step / OFFSET_GRID);
        Line candidate = oldLine(points, g, liveBytes, tried, total);
        if (candidate.residual() < best.residual()) {
          best = candidate;
          offset = tried;
        }
      }
    }
    return new OldFit(best, offset);
  }

  private static Line oldLine(
      List<CurvePoint> points, Generations g, long liveBytes, long offset, boolean total) {
    int n = points.size();
    double[] x = new double[n];
    double[] y = new double[n];
    for (int i = 0; i < n; i++) {
      CurvePoint p = points.get(i);
      x[i] = 1 / (headroom(p, g, liveBytes) - offset);
      y[i] = p.oldGcSecondsPerSecond() + (total ? p.youngGcSecondsPerSecond() : 0);
    }
    return nonNegativeLine(x, y);
  }

  /** A fitted old term and the offset it was fitted with. */
  private record OldFit(Line line, long offsetBytes) {}

  /**
   * Least squares {@code y = intercept + slope * x} with both coefficients >= 0: the unconstrained
   * answer when it is feasible, else the better of the two one-coefficient fits (the
   * Karush-Kuhn-Tucker conditions of a two-variable problem leave no other candidate).
   */
  static Line nonNegativeLine(double[] x, double[] y) {
    int n = x.length;
    double sx = 0;
    double sy = 0;
    double sxx = 0;
    double sxy = 0;
    for (int i = 0; i < n; i++) {
      sx += x[i];
      sy += y[i];
      sxx += x[i] * x[i];
      sxy += x[i] * y[i];
    }
    double det = n * sxx - sx * sx;
    List<Line> candidates = new ArrayList<>();
    if (det > 0) {
      double slope = (n * sxy - sx * sy) / det;
      double intercept = (sy - slope * sx) / n;
      if (slope >= 0 && intercept >= 0) {
        candidates.add(line(x, y, intercept, slope));
      }
    }
    candidates.add(line(x, y, 0, sxx > 0 ? Math.max(0, sxy / sxx) : 0));
    candidates.add(line(x, y, Math.max(0, sy / n), 0));
    return candidates.stream().min((a, b) -> Double.compare(a.residual(), b.residual())).get();
  }

  private static Line line(double[] x, double[] y, double intercept, double slope) {
    double sum = 0;
    for (int i = 0; i < x.length; i++) {
      double e = y[i] - intercept - slope * x[i];
      sum += e * e;
    }
    return new Line(intercept, slope, sum);
  }

  /** A fitted line and its sum of squared residuals. */
  record Line(double intercept, double slope, double residual) {}
}
