package dev.heapherd.engine;

import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.util.List;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.Assume;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;

/**
 * Properties of the allocator on random pools. The optimality conditions checked here are the
 * Karush-Kuhn-Tucker conditions of a separable convex problem under one linear budget constraint, a
 * textbook result (Boyd and Vandenberghe, "Convex Optimization", Cambridge University Press,
 * section 5.5.3).
 */
class AllocatorProperties {

  /** Relative slack for floating-point comparisons of costs. */
  private static final double RELATIVE_TOLERANCE = 1e-9;

  @Provide
  Arbitrary<List<Workload>> bounded() {
    return Pools.pools(true);
  }

  @Provide
  Arbitrary<List<Workload>> unbounded() {
    return Pools.pools(false);
  }

  @Provide
  Arbitrary<Double> budgetFactor() {
    return Arbitraries.doubles().between(0.5, 4.0);
  }

  private static long budgetFor(List<Workload> pool, double factor) {
    return (long) (Pools.minimumBudget(pool) * factor);
  }

  @Property(tries = 500)
  void limitsFitTheBudgetAndUseItToWithinOneMibPerPod(
      @ForAll("bounded") List<Workload> pool, @ForAll("budgetFactor") double factor) {
    long budget = budgetFor(pool, factor);
    PoolPlan plan = Allocator.plan(pool, new Objective.Budget(budget));
    Assume.that(plan.feasible());
    long used = 0;
    long pods = 0;
    boolean allBounded = true;
    for (WorkloadPlan p : plan.workloads()) {
      used += p.workload().replicas() * p.limitBytes();
      pods += p.workload().replicas();
      allBounded &= p.bound() != Bound.NONE;
      assertThat(p.limitBytes() % MIB).isZero();
      assertThat(p.heapBytes() % MIB).isZero();
    }
    assertThat(used).isEqualTo(plan.usedBytes()).isLessThanOrEqualTo(budget);
    if (!allBounded) {
      assertThat(budget - used).isLessThan(pods * MIB);
    }
  }

  @Property(tries = 500)
  void heapsStayWithinBoundsAndFloorsHoldEvenWhenInfeasible(
      @ForAll("bounded") List<Workload> pool, @ForAll("budgetFactor") double factor) {
    PoolPlan plan = Allocator.plan(pool, new Objective.Budget(budgetFor(pool, factor)));
    for (WorkloadPlan p : plan.workloads()) {
      Workload w = p.workload();
      assertThat(p.heapBytes()).isBetween(p.bounds().lowBytes(), p.bounds().highBytes());
      assertThat((double) p.heapBytes())
          .isGreaterThanOrEqualTo(w.liveBytes() * (1 + w.rules().minHeadroomFraction()))
          .isGreaterThanOrEqualTo((double) w.rules().minHeapBytes())
          .isGreaterThan((double) w.liveBytes() + w.gc().offsetBytes());
      assertThat(p.limitBytes())
          .isGreaterThanOrEqualTo(p.heapBytes() + w.nonHeapBytes() + w.rules().marginBytes());
      if (!plan.feasible()) {
        assertThat(p.heapBytes()).isEqualTo(p.bounds().lowBytes());
      }
    }
  }

  @Property(tries = 300)
  void noTransferOfBytesBetweenTwoWorkloadsLowersTheCost(
      @ForAll("bounded") List<Workload> pool, @ForAll("budgetFactor") double factor) {
    Assume.that(pool.size() >= 2);
    PoolPlan plan = Allocator.plan(pool, new Objective.Budget(budgetFor(pool, factor)));
    Assume.that(plan.feasible());
    double[] heaps = Pools.optimalHeaps(plan);
    double best = Pools.objective(pool, heaps);
    for (int from = 0; from < pool.size(); from++) {
      for (int to = 0; to < pool.size(); to++) {
        if (from == to) {
          continue;
        }
        for (double podBytesOut : new double[] {MIB / 16.0, MIB, 64.0 * MIB}) {
          // The same pool bytes leave every pod of one workload and reach every pod of another.
          double poolBytes = podBytesOut * pool.get(from).replicas();
          double[] moved = heaps.clone();
          moved[from] -= podBytesOut;
          moved[to] += poolBytes / pool.get(to).replicas();
          HeapBounds a = plan.workloads().get(from).bounds();
          HeapBounds b = plan.workloads().get(to).bounds();
          if (moved[from] < a.lowBytes() || moved[to] > b.highBytes()) {
            continue;
          }
          assertThat(Pools.objective(pool, moved))
              .isGreaterThanOrEqualTo(best * (1 - RELATIVE_TOLERANCE));
        }
      }
    }
  }

  @Property(tries = 300)
  void freeExtraFollowsTheClosedFormAndScalesWithTheFreeBudget(
      @ForAll("unbounded") List<Workload> pool, @ForAll("budgetFactor") double factor) {
    Assume.that(pool.stream().allMatch(w -> w.gc().constantBytes() > 0));
    // Closed form of the published rule with offset: E_i = E0_i + c*sqrt(w_i*k_i), with
    // c = (B - sum n_i*(L_i + E0_i + O_i)) / sum n_i*sqrt(w_i*k_i) (DESIGN.md, "The model").
    double fixed = 0;
    double pull = 0;
    for (Workload w : pool) {
      fixed +=
          w.replicas() * ((double) w.liveBytes() + w.gc().offsetBytes() + w.podOverheadBytes());
      pull += w.replicas() * w.oldPull();
    }
    long budget = (long) (fixed + factor * 1000 * pull * MIB / Math.sqrt(MIB));
    PoolPlan plan = Allocator.plan(pool, new Objective.Budget(budget));
    PoolPlan doubled = Allocator.plan(pool, new Objective.Budget(budget + (long) (budget - fixed)));
    Assume.that(plan.workloads().stream().allMatch(p -> p.bound() == Bound.NONE));
    double c = (budget - fixed) / pull;
    assertThat(plan.level()).isCloseTo(c, within(c * 1e-9));
    for (int i = 0; i < pool.size(); i++) {
      Workload w = pool.get(i);
      double extra =
          plan.workloads().get(i).optimalHeapBytes() - w.liveBytes() - w.gc().offsetBytes();
      double extraDoubled =
          doubled.workloads().get(i).optimalHeapBytes() - w.liveBytes() - w.gc().offsetBytes();
      assertThat(extra).isCloseTo(c * w.oldPull(), within(extra * 1e-9 + 1));
      // Doubling the memory above the fixed part doubles every free workload's extra.
      assertThat(extraDoubled).isCloseTo(2 * extra, within(extra * 1e-9 + 1));
    }
  }

  @Property(tries = 200)
  void moreBudgetNeverRaisesTheCost(
      @ForAll("bounded") List<Workload> pool, @ForAll("budgetFactor") double factor) {
    long budget = budgetFor(pool, factor);
    PoolPlan plan = Allocator.plan(pool, new Objective.Budget(budget));
    Assume.that(plan.feasible());
    PoolPlan more = Allocator.plan(pool, new Objective.Budget(budget + budget / 10));
    assertThat(Pools.objective(pool, Pools.optimalHeaps(more)))
        .isLessThanOrEqualTo(
            Pools.objective(pool, Pools.optimalHeaps(plan)) * (1 + RELATIVE_TOLERANCE));
  }
}
