package dev.heapherd.engine;

import static dev.heapherd.engine.Units.GIB;
import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.util.List;
import java.util.OptionalDouble;
import java.util.OptionalLong;
import org.junit.jupiter.api.Test;

/** The young part of the curve and the old generation's share of the heap. */
class GenerationalCurveTest {

  private static final HeapRules OPEN = new HeapRules(0, Long.MAX_VALUE, 0.1, 10, 0);

  /** HotSpot's default -XX:NewRatio=2 (Java SE GC tuning guide): old is two thirds of the heap. */
  private static final double NEW_RATIO_OLD_SHARE = 2.0 / 3;

  private static GcObservation observation(
      String collector,
      long heapMib,
      long liveMib,
      double gcRate,
      double youngRate,
      OptionalLong youngCapacity,
      OptionalLong oldCapacity) {
    return new GcObservation(
        collector,
        heapMib * MIB,
        liveMib * MIB,
        0,
        gcRate,
        youngRate,
        0,
        youngCapacity,
        oldCapacity,
        OptionalDouble.empty(),
        OptionalDouble.empty());
  }

  private static Workload workload(String name, long liveMib, long heapMib, GcModel gc) {
    return new Workload(name, 1, liveMib * MIB, liveMib * MIB, heapMib * MIB, 0, 1, gc, OPEN);
  }

  @Test
  void theCurvePassesThroughTheMeasurementWithBothParts() {
    // G1 at 1 GiB: 0.03 s/s young with 400 MiB young capacity, 0.01 s/s old; 300 MiB live.
    GcModel gc =
        GcConstants.estimate(
            observation(
                "G1", 1024, 300, 0.04, 0.03, OptionalLong.of(400 * MIB), OptionalLong.of(GIB)));
    assertThat(gc.generations().youngShareMeasured()).isTrue();
    assertThat(gc.generations().youngShare()).isCloseTo(400.0 / 1024, within(1e-12));
    assertThat(gc.youngConstantBytes()).isCloseTo(0.03 * 400 * MIB, within(1e-3));
    assertThat(gc.constantBytes()).isCloseTo(0.01 * 724 * MIB, within(1e-3));
    assertThat(gc.gcFraction(GIB, 300.0 * MIB)).isCloseTo(0.04, within(1e-12));
    // Twice the heap: the young collections run half as often.
    assertThat(gc.gcFraction(2.0 * GIB, 300.0 * MIB))
        .isCloseTo(0.015 + 0.01 * 724 / 1748, within(1e-12));
  }

  @Test
  void parallelsOldGenerationIsTwoThirdsOfTheHeapWhenNotMeasured() {
    GcModel gc =
        GcConstants.estimate(
            observation(
                "Parallel", 600, 280, 0.02, 0.015, OptionalLong.empty(), OptionalLong.empty()));
    assertThat(gc.generations().oldShare()).isCloseTo(NEW_RATIO_OLD_SHARE, within(1e-12));
    assertThat(gc.generations().oldShareMeasured()).isFalse();
    // 280 MiB live with 10 % headroom must fit in the old generation: heap >= 308 / (2/3).
    HeapBounds bounds = HeapBounds.of(workload("index", 280, 600, gc));
    assertThat(bounds.lowBytes())
        .isGreaterThanOrEqualTo((long) (280 * 1.1 / NEW_RATIO_OLD_SHARE * MIB));
  }

  @Test
  void theFloorHoldsWhatThePodNeededAtStartUp() {
    GcModel gc =
        GcConstants.estimate(
            observation("G1", 1024, 200, 0.02, 0.02, OptionalLong.empty(), OptionalLong.empty()));
    Workload loading = new Workload("loader", 1, 200 * MIB, 500 * MIB, GIB, 0, 1, gc, OPEN);
    assertThat(HeapBounds.of(loading).lowBytes()).isGreaterThanOrEqualTo((long) (550 * MIB));
  }

  @Test
  void youngOnlyHeapsGrowWithTheSquareRootOfTheirYoungConstant() {
    // cost = a / (f * H): equal marginal cost a / (f * H^2) gives H_i / H_j = sqrt(a_i / a_j)
    // (f cancels in the calibration), the square-root rule on the whole heap.
    GcModel busy =
        GcConstants.estimate(
            observation("G1", 1024, 100, 0.16, 0.16, OptionalLong.empty(), OptionalLong.empty()));
    GcModel quiet =
        GcConstants.estimate(
            observation("G1", 1024, 100, 0.01, 0.01, OptionalLong.empty(), OptionalLong.empty()));
    assertThat(busy.estimator()).isEqualTo(GcConstantEstimator.YOUNG_ONLY);
    PoolPlan plan =
        Allocator.plan(
            List.of(workload("busy", 100, 1024, busy), workload("quiet", 100, 1024, quiet)),
            new Objective.Budget(5 * GIB));
    double ratio =
        plan.workloads().get(0).optimalHeapBytes() / plan.workloads().get(1).optimalHeapBytes();
    assertThat(ratio).isCloseTo(4, within(1e-9));
  }

  @Test
  void aMixedPoolSitsAtOneMarginalCost() {
    GcModel both =
        GcConstants.estimate(
            observation(
                "Parallel",
                900,
                300,
                0.05,
                0.03,
                OptionalLong.of(300 * MIB),
                OptionalLong.of(600 * MIB)));
    GcModel old =
        GcConstants.estimate(
            observation("ZGC", 900, 300, 0.02, 0, OptionalLong.empty(), OptionalLong.empty()));
    Workload a = workload("a", 300, 900, both);
    Workload b = workload("b", 300, 900, old);
    PoolPlan plan = Allocator.plan(List.of(a, b), new Objective.Budget(3 * GIB));
    double ha = plan.workloads().get(0).optimalHeapBytes();
    double hb = plan.workloads().get(1).optimalHeapBytes();
    // Karush-Kuhn-Tucker: the derivatives of both curves agree at an interior optimum.
    double step = MIB;
    double slopeA =
        (both.gcFraction(ha + step, a.liveBytes()) - both.gcFraction(ha - step, a.liveBytes())) / 2;
    double slopeB =
        (old.gcFraction(hb + step, b.liveBytes()) - old.gcFraction(hb - step, b.liveBytes())) / 2;
    assertThat(slopeA / slopeB).isCloseTo(1, within(1e-6));
    assertThat(ha + hb).isCloseTo(3.0 * GIB, within(1.0));
  }
}
