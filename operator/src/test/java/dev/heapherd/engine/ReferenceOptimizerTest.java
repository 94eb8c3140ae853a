package dev.heapherd.engine;

import static org.assertj.core.api.Assertions.assertThat;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.hipparchus.exception.MathIllegalArgumentException;
import org.hipparchus.linear.MatrixUtils;
import org.hipparchus.linear.RealMatrix;
import org.hipparchus.linear.RealVector;
import org.hipparchus.optim.InitialGuess;
import org.hipparchus.optim.MaxIter;
import org.hipparchus.optim.nonlinear.scalar.ObjectiveFunction;
import org.hipparchus.optim.nonlinear.vector.constrained.LinearInequalityConstraint;
import org.hipparchus.optim.nonlinear.vector.constrained.SQPOption;
import org.hipparchus.optim.nonlinear.vector.constrained.SQPOptimizerS;
import org.hipparchus.optim.nonlinear.vector.constrained.TwiceDifferentiableFunction;
import org.junit.jupiter.api.Test;

/**
 * Checks the exact water-filling allocator against a general-purpose constrained optimiser that
 * knows nothing of the square-root rule: Hipparchus 4.0.2 {@code SQPOptimizerS} (sequential
 * quadratic programming, org.hipparchus:hipparchus-optim) minimising the same weighted GC time
 * under the same budget and bounds.
 */
class ReferenceOptimizerTest {

  // Fixed so a failure reproduces; the value itself means nothing.
  private static final long SEED = 0x5EED_2022L;

  // The brief asks for at least 200 random pools.
  private static final int INSTANCES = 240;

  private static final int MIN_WORKLOADS = 2;
  private static final int MAX_WORKLOADS = 8;
  private static final int MAX_REPLICAS = 24;

  // Live sizes from small sidecars to large caches.
  private static final double MIN_LIVE_BYTES = 8.0 * Units.MIB;
  private static final double MAX_LIVE_BYTES = 16.0 * Units.GIB;

  // Current heap is live times (1 + this), spanning tight to generous deployments.
  private static final double MIN_CURRENT_HEADROOM = 0.1;
  private static final double MAX_CURRENT_HEADROOM = 3.0;

  // GC time fraction at the current heap, 0.05 % to 30 %, which calibrates k.
  private static final double MIN_GC_FRACTION = 5e-4;
  private static final double MAX_GC_FRACTION = 0.3;

  // E0 is at most this share of the current headroom so k stays calibratable.
  private static final double MAX_OFFSET_SHARE = 0.6;

  private static final double MIN_WEIGHT = 0.2;
  private static final double MAX_WEIGHT = 5.0;

  private static final double MIN_NON_HEAP_BYTES = 16.0 * Units.MIB;
  private static final double MAX_NON_HEAP_BYTES = 768.0 * Units.MIB;
  private static final double MAX_MARGIN_BYTES = 128.0 * Units.MIB;

  // An absolute floor, when set, is live times (1 + this).
  private static final double MIN_FLOOR_HEADROOM = 0.2;
  private static final double MAX_FLOOR_HEADROOM = 1.5;

  // An absolute ceiling, when set, is live times (1 + this).
  private static final double MIN_CEILING_HEADROOM = 0.3;
  private static final double MAX_CEILING_HEADROOM = 5.0;

  // A finite stand-in for "no ceiling", far above any heap these pools reach.
  private static final long NO_CEILING_BYTES = 1024L * Units.GIB;

  private static final double MAX_MIN_HEADROOM_FRACTION = 0.3;
  private static final double MIN_STEP_FRACTION = 0.1;
  private static final double MAX_STEP_FRACTION = 1.5;

  // Heap-independent GC time Y; drawn only to show it does not disturb the optimum.
  private static final double MAX_HEAP_INDEPENDENT_FRACTION = 0.05;

  // Spare memory above the minimum budget, as a multiple of the pool's live bytes.
  private static final double MIN_SPARE_OF_LIVE = 0.005;
  private static final double MAX_SPARE_OF_LIVE = 4.0;

  // Each optional rule (floor, ceiling, step limit, zero offset) is on for one draw in this many.
  private static final int RULE_ODDS = 3;

  // One pool in this many gets exactly the minimum budget; one in this many gets more than every
  // ceiling can use.
  private static final int MINIMUM_BUDGET_ODDS = 12;
  private static final int ABOVE_CEILINGS_ODDS = 8;

  // The brief's acceptance bound: 0.1 % either way.
  private static final double TOLERANCE = 1e-3;

  // Slack for summing a few doubles near 1e12 bytes when checking the engine stays in budget.
  private static final double FLOAT_SLACK = 1e-9;

  // Enough iterations for the SQP to converge on eight variables with room to spare.
  private static final int SQP_MAX_ITERATIONS = 500;

  // Stop when a step moves x by less than this relative to |x|; x is O(1) by construction.
  private static final double SQP_EPSILON = 1e-12;

  static final int[] RESTARTS_TMP = new int[1];
  private static final boolean USE_EXACT_HESSIAN = Boolean.getBoolean("exact");

  // SQPOptimizerS 4.0.2 rejects its own damped-BFGS matrix when an off-diagonal entry cancels to
  // rounding noise (its symmetry check is relative to that entry), which a separable objective
  // invites near the optimum. The reference then restarts from the last iterate with a fresh
  // matrix; this many restarts is far more than the instances below need.
  private static final int SQP_RESTARTS = 500;

  // The objective is continued below half the floor headroom so SQP trial points that leave the
  // box (SQP is infeasible between iterates) still see a finite, convex function.
  private static final double EXTENSION_POINT = 0.5;

  @Test
  void exactSolverMatchesSequentialQuadraticProgramming() {
    SplittableRandom random = new SplittableRandom(SEED);
    int ceilingBinds = 0;
    int floorBinds = 0;
    int interiorOnly = 0;
    for (int instance = 0; instance < INSTANCES; instance++) {
      List<Workload> pool = randomPool(random);
      long budget = randomBudget(random, pool);
      PoolPlan plan = Allocator.plan(pool, new Objective.Budget(budget));
      assertThat(plan.feasible()).as("instance %d", instance).isTrue();

      double[] engine = plan.workloads().stream().mapToDouble(WorkloadPlan::optimalHeapBytes).toArray();
      assertWithinBoundsAndBudget(pool, engine, budget, instance);
      double[] reference = referenceHeaps(pool, budget);
      assertWithinBoundsAndBudget(pool, reference, budget, instance);

      double engineCost = weightedGcFraction(pool, engine);
      double referenceCost = weightedGcFraction(pool, reference);
      double gapTmp = (engineCost - referenceCost) / referenceCost;
      System.out.println("TMPGAP " + instance + " " + pool.size() + " " + gapTmp + " " + RESTARTS_TMP[0]);
      assertThat((engineCost - referenceCost) / referenceCost)
          .as("instance %d: engine %s vs reference %s", instance, engineCost, referenceCost)
          .isBetween(-TOLERANCE, TOLERANCE);

      boolean atCeiling = false;
      boolean atFloor = false;
      for (int i = 0; i < pool.size(); i++) {
        HeapBounds bounds = HeapBounds.of(pool.get(i));
        boolean pinned = bounds.lowBytes() == bounds.highBytes();
        atCeiling |= !pinned && engine[i] == bounds.highBytes();
        atFloor |= !pinned && engine[i] == bounds.lowBytes();
      }
      ceilingBinds += atCeiling ? 1 : 0;
      floorBinds += atFloor ? 1 : 0;
      interiorOnly += atCeiling || atFloor ? 0 : 1;
    }
    // The draw must exercise every regime, or the comparison proves less than it claims.
    assertThat(ceilingBinds).isPositive();
    assertThat(floorBinds).isPositive();
    assertThat(interiorOnly).isPositive();
  }

  /** The reference answer: SQP over scaled headroom, then made exactly feasible. */
  private static double[] referenceHeaps(List<Workload> pool, long budget) {
    int size = pool.size();
    double[] low = new double[size];
    double[] high = new double[size];
    double[] pods = new double[size];
    double totalPods = 0;
    double heapBudget = budget;
    for (int i = 0; i < size; i++) {
      Workload w = pool.get(i);
      HeapBounds bounds = HeapBounds.of(w);
      low[i] = bounds.lowBytes();
      high[i] = bounds.highBytes();
      pods[i] = w.replicas();
      totalPods += pods[i];
      heapBudget -= pods[i] * (low[i] + w.podOverheadBytes());
    }
    // Scale: x_i = (heap_i - low_i) / unit with unit the spare heap per pod, so the budget row
    // reads sum (n_i / N) x_i <= 1 and every variable and the objective are O(1).
    double unit = Math.max(Units.MIB, heapBudget / totalPods);
    double spare = heapBudget / (totalPods * unit);

    double[] start = new double[size];
    double[] floorHeadroom = new double[size];
    double[] numerator = new double[size];
    for (int i = 0; i < size; i++) {
      Workload w = pool.get(i);
      // An even split of the spare, clamped: feasible and blind to the square-root rule.
      start[i] = Math.min((high[i] - low[i]) / unit, spare);
      floorHeadroom[i] = (low[i] - w.liveBytes() - w.gc().offsetBytes()) / unit;
      numerator[i] = pods[i] * w.weight() * w.gc().constantBytes() / unit;
    }
    // One inequality block A x >= b: the budget row, then x >= 0, then x <= width.
    double[][] rows = new double[2 * size + 1][size];
    double[] rhs = new double[2 * size + 1];
    for (int i = 0; i < size; i++) {
      rows[0][i] = -pods[i] / totalPods;
      rows[1 + i][i] = 1;
      rows[1 + size + i][i] = -1;
      rhs[1 + size + i] = -(high[i] - low[i]) / unit;
    }
    rhs[0] = -spare;
    RealMatrix rotation = Boolean.getBoolean("rot") ? mixingRotation(size) : MatrixUtils.createRealIdentityMatrix(size);
    LinearInequalityConstraint constraints =
        new LinearInequalityConstraint(MatrixUtils.createRealMatrix(rows).multiply(rotation), MatrixUtils.createRealVector(rhs));

    double[] z = rotation.transpose().operate(start);
    for (int attempt = 0; ; attempt++) {
      ScaledCost cost = new ScaledCost(numerator, floorHeadroom, rotation).normalisedAt(z);
      SQPOption options = new SQPOption();
      options.setEps(SQP_EPSILON);
      options.setUseFunHessian(USE_EXACT_HESSIAN);
      try {
        z =
            new SQPOptimizerS()
                .optimize(
                    new ObjectiveFunction(cost),
                    constraints,
                    new InitialGuess(z),
                    new MaxIter(SQP_MAX_ITERATIONS),
                    options)
                .getX()
                .toArray();
        break;
      } catch (MathIllegalArgumentException | java.util.NoSuchElementException e) {
        RESTARTS_TMP[0]++;
        if (java.util.Arrays.equals(cost.lastIterate(), z)) {
          break;
        }
        if (attempt == SQP_RESTARTS) {
          throw new AssertionError(e);
        }
        z = cost.lastIterate();
      }
    }
    double[] x = rotation.operate(z);

    double[] heaps = new double[size];
    double used = 0;
    for (int i = 0; i < size; i++) {
      heaps[i] = Math.min(high[i], Math.max(low[i], low[i] + unit * x[i]));
      used += pods[i] * (heaps[i] - low[i]);
    }
    // SQP ends within its tolerance of the budget, possibly just outside; shrink every heap's
    // share of the spare alike so the reference never gets memory the engine was denied.
    if (used > heapBudget) {
      double shrink = heapBudget / used;
      for (int i = 0; i < size; i++) {
        heaps[i] = low[i] + (heaps[i] - low[i]) * shrink;
      }
    }
    return heaps;
  }

  /**
   * {@code sum c_i / (u_i + x_i) / scale} with {@code x = R z}: the pool's weighted GC fraction in
   * scaled, rotated variables. Below half the floor headroom each term follows its second-order
   * Taylor polynomial, which keeps it finite, convex and twice differentiable where SQP may probe
   * outside the bounds.
   */
  private static final class ScaledCost extends TwiceDifferentiableFunction {
    private final double[] numerator;
    private final double[] floorHeadroom;
    private final RealMatrix rotation;
    private final double scale;
    private double[] lastIterate;

    ScaledCost(double[] numerator, double[] floorHeadroom, RealMatrix rotation) {
      this(numerator, floorHeadroom, rotation, 1);
    }

    private ScaledCost(
        double[] numerator, double[] floorHeadroom, RealMatrix rotation, double scale) {
      this.numerator = numerator;
      this.floorHeadroom = floorHeadroom;
      this.rotation = rotation;
      this.scale = scale;
    }

    /**
     * The same cost divided so its steepest slope at {@code z} is 1. SQPOptimizerS 4.0.2 solves
     * its first QP only when the start's largest gradient or constraint entry exceeds sigmaMax
     * (0.9), and otherwise fails on a missing QP solution; a unit slope always clears that.
     */
    ScaledCost normalisedAt(double[] z) {
      return new ScaledCost(
          numerator, floorHeadroom, rotation, gradient(z).getLInfNorm());
    }

    /** The point of the latest gradient call: SQP asks for one at every accepted iterate. */
    double[] lastIterate() {
      return lastIterate;
    }

    @Override
    public int dim() {
      return numerator.length;
    }

    @Override
    public double value(RealVector z) {
      RealVector x = rotation.operate(z);
      double sum = 0;
      for (int i = 0; i < dim(); i++) {
        double edge = EXTENSION_POINT * floorHeadroom[i];
        double u = floorHeadroom[i] + x.getEntry(i);
        if (u >= edge) {
          sum += numerator[i] / u;
        } else {
          double d = u - edge;
          sum += numerator[i] * (1 / edge - d / (edge * edge) + d * d / (edge * edge * edge));
        }
      }
      return sum / scale;
    }

    @Override
    public RealVector gradient(RealVector z) {
      lastIterate = z.toArray();
      RealVector x = rotation.operate(z);
      RealVector g = MatrixUtils.createRealVector(dim());
      for (int i = 0; i < dim(); i++) {
        double edge = EXTENSION_POINT * floorHeadroom[i];
        double u = Math.max(edge, floorHeadroom[i] + x.getEntry(i));
        double d = floorHeadroom[i] + x.getEntry(i) - u;
        g.setEntry(i, numerator[i] * (-1 / (u * u) + 2 * d / (u * u * u)) / scale);
      }
      return rotation.transpose().operate(g);
    }

    @Override
    public RealMatrix hessian(RealVector z) {
      RealVector x = rotation.operate(z);
      RealMatrix h = MatrixUtils.createRealMatrix(dim(), dim());
      for (int i = 0; i < dim(); i++) {
        double u =
            Math.max(EXTENSION_POINT * floorHeadroom[i], floorHeadroom[i] + x.getEntry(i));
        h.setEntry(i, i, 2 * numerator[i] / (u * u * u) / scale);
      }
      return rotation.transpose().multiply(h).multiply(rotation);
    }
  }

  /** Orthonormal DCT-II basis: a fixed rotation that mixes every coordinate with every other. */
  private static RealMatrix mixingRotation(int size) {
    RealMatrix r = MatrixUtils.createRealMatrix(size, size);
    for (int k = 0; k < size; k++) {
      double norm = Math.sqrt((k == 0 ? 1.0 : 2.0) / size);
      for (int j = 0; j < size; j++) {
        r.setEntry(j, k, norm * Math.cos(Math.PI * (j + 0.5) * k / size));
      }
    }
    return r;
  }

  /** {@code sum n_i * w_i * k_i / (heap_i - L_i - E0_i)}, the quantity both sides minimise. */
  private static double weightedGcFraction(List<Workload> pool, double[] heaps) {
    double sum = 0;
    for (int i = 0; i < heaps.length; i++) {
      Workload w = pool.get(i);
      double usable = heaps[i] - w.liveBytes() - w.gc().offsetBytes();
      sum += w.replicas() * w.weight() * w.gc().constantBytes() / usable;
    }
    return sum;
  }

  private static void assertWithinBoundsAndBudget(
      List<Workload> pool, double[] heaps, long budget, int instance) {
    double used = 0;
    for (int i = 0; i < heaps.length; i++) {
      Workload w = pool.get(i);
      HeapBounds bounds = HeapBounds.of(w);
      assertThat(heaps[i])
          .as("instance %d workload %d", instance, i)
          .isBetween((double) bounds.lowBytes(), (double) bounds.highBytes());
      used += w.replicas() * (heaps[i] + w.podOverheadBytes());
    }
    assertThat(used).as("instance %d", instance).isLessThanOrEqualTo(budget * (1 + FLOAT_SLACK));
  }

  private static List<Workload> randomPool(SplittableRandom random) {
    int size = random.nextInt(MIN_WORKLOADS, MAX_WORKLOADS + 1);
    List<Workload> pool = new ArrayList<>(size);
    for (int i = 0; i < size; i++) {
      pool.add(randomWorkload(random, "w" + i));
    }
    return pool;
  }

  private static Workload randomWorkload(SplittableRandom random, String name) {
    int replicas = random.nextInt(1, MAX_REPLICAS + 1);
    long live = (long) logUniform(random, MIN_LIVE_BYTES, MAX_LIVE_BYTES);
    long current =
        (long) (live * (1 + random.nextDouble(MIN_CURRENT_HEADROOM, MAX_CURRENT_HEADROOM)));
    long offset =
        oneIn(random, RULE_ODDS)
            ? 0
            : (long) (random.nextDouble() * MAX_OFFSET_SHARE * (current - live));
    double k = logUniform(random, MIN_GC_FRACTION, MAX_GC_FRACTION) * (current - live - offset);
    GcModel gc =
        new GcModel(
            k,
            offset,
            random.nextDouble() * MAX_HEAP_INDEPENDENT_FRACTION,
            GcConstantEstimator.CURRENT_HEADROOM);
    long floor =
        oneIn(random, RULE_ODDS)
            ? (long) (live * (1 + random.nextDouble(MIN_FLOOR_HEADROOM, MAX_FLOOR_HEADROOM)))
            : 0;
    long ceiling =
        oneIn(random, RULE_ODDS)
            ? NO_CEILING_BYTES
            : (long) (live * (1 + random.nextDouble(MIN_CEILING_HEADROOM, MAX_CEILING_HEADROOM)));
    double step =
        oneIn(random, RULE_ODDS)
            ? random.nextDouble(MIN_STEP_FRACTION, MAX_STEP_FRACTION)
            : Double.POSITIVE_INFINITY;
    HeapRules rules =
        new HeapRules(
            floor,
            ceiling,
            random.nextDouble() * MAX_MIN_HEADROOM_FRACTION,
            step,
            (long) (random.nextDouble() * MAX_MARGIN_BYTES));
    long nonHeap = (long) random.nextDouble(MIN_NON_HEAP_BYTES, MAX_NON_HEAP_BYTES);
    double weight = logUniform(random, MIN_WEIGHT, MAX_WEIGHT);
    return new Workload(name, replicas, live, current, nonHeap, weight, gc, rules);
  }

  /** Between the minimum budget and well above it; sometimes past what every ceiling can use. */
  private static long randomBudget(SplittableRandom random, List<Workload> pool) {
    double minimum = 0;
    double maximum = 0;
    double live = 0;
    boolean allCapped = true;
    for (Workload w : pool) {
      HeapBounds bounds = HeapBounds.of(w);
      minimum += (double) w.replicas() * (bounds.lowBytes() + w.podOverheadBytes());
      maximum += (double) w.replicas() * (bounds.highBytes() + w.podOverheadBytes());
      live += (double) w.replicas() * w.liveBytes();
      allCapped &= w.rules().maxHeapBytes() < NO_CEILING_BYTES;
    }
    if (oneIn(random, MINIMUM_BUDGET_ODDS)) {
      return (long) minimum;
    }
    if (allCapped && oneIn(random, ABOVE_CEILINGS_ODDS)) {
      return (long) (maximum + random.nextDouble() * live);
    }
    return (long) (minimum + logUniform(random, MIN_SPARE_OF_LIVE, MAX_SPARE_OF_LIVE) * live);
  }

  private static boolean oneIn(SplittableRandom random, int odds) {
    return random.nextInt(odds) == 0;
  }

  private static double logUniform(SplittableRandom random, double min, double max) {
    return Math.exp(random.nextDouble(Math.log(min), Math.log(max)));
  }
}
