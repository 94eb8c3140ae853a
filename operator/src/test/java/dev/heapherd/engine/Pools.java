package dev.heapherd.engine;

import static dev.heapherd.engine.Units.MIB;

import java.util.List;
import java.util.OptionalDouble;
import java.util.SplittableRandom;
import java.util.stream.IntStream;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.Combinators;

/** Random pools for property tests, and the weighted objective the allocator minimises. */
final class Pools {

  /** Random floors, ceilings, headroom and step rules, as the large-pool benchmark draws them. */
  static HeapRules randomRules(SplittableRandom random) {
    return new HeapRules(
        random.nextLong(64, 512) * MIB,
        random.nextLong(9000, 20000) * MIB,
        random.nextInt(10, 50) / 100.0,
        random.nextInt(20, 100) / 100.0,
        64 * MIB);
  }

  private Pools() {}

  /** A workload with random size, GC curve and rules; some have no bounds at all. */
  static Arbitrary<Workload> workloads(boolean withRules) {
    Arbitrary<Long> liveMib = Arbitraries.longs().between(16, 16 * 1024);
    Arbitrary<Double> headroomFactor = Arbitraries.doubles().between(0.3, 3.0);
    Arbitrary<Double> gcFraction = Arbitraries.doubles().between(0.0001, 0.2).ofScale(6);
    Arbitrary<Long> offsetMib =
        Arbitraries.oneOf(Arbitraries.just(0L), Arbitraries.longs().between(1, 64));
    Arbitrary<Integer> replicas = Arbitraries.integers().between(1, 20);
    Arbitrary<Integer> weight = Arbitraries.integers().between(1, 5);
    Arbitrary<Long> nonHeapMib = Arbitraries.longs().between(50, 600);
    Arbitrary<HeapRules> rules = withRules ? rules() : Arbitraries.just(HeapRules.unbounded());
    return Combinators.combine(
            liveMib, headroomFactor, gcFraction, offsetMib, replicas, weight, nonHeapMib, rules)
        .as(
            (live, factor, gc, offset, n, w, nonHeap, r) -> {
              long liveBytes = live * MIB;
              long heap = liveBytes + offset * MIB + (long) Math.max(2 * MIB, liveBytes * factor);
              GcModel model =
                  PublishedRule.estimate(
                      gc,
                      0,
                      heap,
                      liveBytes,
                      offset * MIB,
                      OptionalDouble.empty(),
                      OptionalDouble.empty());
              return new Workload("w", n, liveBytes, liveBytes, heap, nonHeap * MIB, w, model, r);
            });
  }

  private static Arbitrary<HeapRules> rules() {
    return Combinators.combine(
            Arbitraries.longs().between(0, 2048),
            Arbitraries.longs().between(512, 64 * 1024),
            Arbitraries.integers().between(0, 100),
            Arbitraries.integers().between(10, 300),
            Arbitraries.longs().between(0, 128))
        .as(
            (floorMib, ceilingMib, headroomPercent, stepPercent, marginMib) ->
                new HeapRules(
                    floorMib * MIB,
                    ceilingMib * MIB,
                    headroomPercent / 100.0,
                    stepPercent / 100.0,
                    marginMib * MIB));
  }

  /** Pools of 1 to 12 workloads with unique names. */
  static Arbitrary<List<Workload>> pools(boolean withRules) {
    return workloads(withRules).list().ofMinSize(1).ofMaxSize(12).map(Pools::named);
  }

  static List<Workload> named(List<Workload> ws) {
    return IntStream.range(0, ws.size())
        .mapToObj(
            i -> {
              Workload w = ws.get(i);
              return new Workload(
                  "w" + i,
                  w.replicas(),
                  w.liveBytes(),
                  w.liveBytes(),
                  w.currentHeapBytes(),
                  w.nonHeapBytes(),
                  w.weight(),
                  w.gc(),
                  w.rules());
            })
        .toList();
  }

  /** The weighted pool GC cost {@code sum n*w*k/(H - L - E0)} at the given per-pod heaps. */
  static double objective(List<Workload> workloads, double[] heapBytes) {
    double sum = 0;
    for (int i = 0; i < heapBytes.length; i++) {
      Workload w = workloads.get(i);
      sum += w.replicas() * w.weight() * w.gc().heapDependentFraction(heapBytes[i], w.liveBytes());
    }
    return sum;
  }

  /** The exact per-pod heaps of a plan. */
  static double[] optimalHeaps(PoolPlan plan) {
    return plan.workloads().stream().mapToDouble(WorkloadPlan::optimalHeapBytes).toArray();
  }

  /** Memory the pool needs with every heap at its low bound. */
  static long minimumBudget(List<Workload> workloads) {
    return Allocator.plan(workloads, new Objective.Budget(1)).minimumBudgetBytes();
  }
}
