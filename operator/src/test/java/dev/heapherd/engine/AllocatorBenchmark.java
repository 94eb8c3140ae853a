package dev.heapherd.engine;

import static dev.heapherd.engine.Units.MIB;

import java.util.ArrayList;
import java.util.List;
import java.util.OptionalDouble;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import org.openjdk.jmh.annotations.Benchmark;
import org.openjdk.jmh.annotations.BenchmarkMode;
import org.openjdk.jmh.annotations.Fork;
import org.openjdk.jmh.annotations.Measurement;
import org.openjdk.jmh.annotations.Mode;
import org.openjdk.jmh.annotations.OutputTimeUnit;
import org.openjdk.jmh.annotations.Param;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;
import org.openjdk.jmh.annotations.Warmup;

/**
 * Time to plan a large pool with floors, ceilings and step limits, including both comparison rules
 * and the forecasts. Target: under 20 ms for 100,000 workloads on a 2-core machine.
 */
@State(Scope.Benchmark)
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.MILLISECONDS)
@Warmup(iterations = 5, time = 1)
@Measurement(iterations = 10, time = 1)
@Fork(1)
public class AllocatorBenchmark {

  /** Fixed seed: every run plans the same pool. */
  private static final long SEED = 20261201L;

  @Param({"1000", "100000"})
  int workloads;

  private List<Workload> pool;
  private Objective.Budget budget;
  private WaterFilling proposal;
  private double heapTarget;

  @Setup
  public void setUp() {
    SplittableRandom random = new SplittableRandom(SEED);
    pool = new ArrayList<>(workloads);
    double podMemory = 0;
    for (int i = 0; i < workloads; i++) {
      long live = random.nextLong(32, 8192) * MIB;
      long heap = live + random.nextLong(16, 4096) * MIB;
      long nonHeap = random.nextLong(64, 512) * MIB;
      int replicas = random.nextInt(1, 10);
      HeapRules rules = Pools.randomRules(random);
      pool.add(
          new Workload(
              "w" + i,
              replicas,
              live,
              live,
              heap,
              nonHeap,
              random.nextInt(1, 4),
              PublishedRule.estimate(
                  random.nextDouble(0.001, 0.1),
                  random.nextDouble(0, 0.001),
                  heap,
                  live,
                  random.nextBoolean() ? 0 : 8 * MIB,
                  OptionalDouble.empty(),
                  OptionalDouble.empty()),
              rules));
      podMemory += (double) replicas * (heap + nonHeap + 64 * MIB);
    }
    budget = new Objective.Budget((long) podMemory);
    double[] base = new double[workloads];
    double[] pull = new double[workloads];
    double[] low = new double[workloads];
    double[] high = new double[workloads];
    double[] count = new double[workloads];
    heapTarget = budget.bytes();
    for (int i = 0; i < workloads; i++) {
      Workload w = pool.get(i);
      HeapBounds bounds = HeapBounds.of(w);
      base[i] = (double) w.liveBytes() + w.gc().offsetBytes();
      pull[i] = w.oldPull();
      low[i] = bounds.lowBytes();
      high[i] = bounds.highBytes();
      count[i] = w.replicas();
      heapTarget -= (double) w.replicas() * w.podOverheadBytes();
    }
    proposal = new WaterFilling(base, pull, low, high, count);
  }

  @Benchmark
  public double solve() {
    return proposal.levelFor(heapTarget);
  }

  @Benchmark
  public PoolPlan plan() {
    return Allocator.plan(pool, budget);
  }
}
