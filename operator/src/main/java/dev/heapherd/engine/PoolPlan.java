package dev.heapherd.engine;

import java.util.List;

/**
 * The allocator's answer for a pool.
 *
 * @param objective what was optimised
 * @param budgetBytes the budget, or under prices the pool size the prices chose
 * @param feasible false when the floors alone exceed the budget (heaps then sit at their floors)
 * @param minimumBudgetBytes memory the pool needs with every heap at its low bound
 * @param usedBytes sum over workloads of replicas x proposed limit
 * @param level the water level c of {@code E = E0 + c * sqrt(w*k)}
 * @param workloads per-workload answers, in input order
 * @param totalGcSecondsPerHour pool totals of predicted GC time
 */
public record PoolPlan(
    Objective objective,
    long budgetBytes,
    boolean feasible,
    long minimumBudgetBytes,
    long usedBytes,
    double level,
    List<WorkloadPlan> workloads,
    GcForecast totalGcSecondsPerHour) {

  /** Makes the list immutable. */
  public PoolPlan {
    workloads = List.copyOf(workloads);
  }
}
