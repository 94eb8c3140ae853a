package dev.heapherd.engine;

import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;

/** Learning a curve from the points of earlier heaps. */
class CurveFitTest {

  private static final Generations PARALLEL = new Generations(1.0 / 3, true, 2.0 / 3, true);
  private static final long LIVE = 300 * MIB;

  /** A known curve: Y = 0.002, a = 0.01 x 200 MiB, k = 0.004 x 300 MiB, E0 = 40 MiB. */
  private static final GcModel TRUTH =
      new GcModel(
          0.004 * 300 * MIB,
          40 * MIB,
          0.002,
          0.01 * 200 * MIB,
          PARALLEL,
          GcConstantEstimator.CURRENT_HEADROOM);

  private static CurvePoint pointOf(GcModel curve, long heapMib) {
    double heap = heapMib * MIB;
    double young = curve.youngConstantBytes() / (PARALLEL.youngShare() * heap);
    double old =
        curve.heapIndependentFraction()
            + curve.constantBytes() / curve.oldHeadroomBytes(heap, LIVE);
    return new CurvePoint(heapMib * MIB, LIVE, young, old);
  }

  @Test
  void onePointLeavesTheCalibratedCurve() {
    GcModel calibrated = TRUTH;
    assertThat(CurveFit.fit(calibrated, List.of(pointOf(TRUTH, 900)))).isSameAs(calibrated);
    // Two points at heaps within a few percent are one heap.
    assertThat(CurveFit.fit(calibrated, List.of(pointOf(TRUTH, 900), pointOf(TRUTH, 910))))
        .isSameAs(calibrated);
  }

  @Test
  void recoversAKnownCurveFromFourHeaps() {
    List<CurvePoint> points = new ArrayList<>();
    for (long heap : new long[] {700, 900, 1200, 1600}) {
      points.add(pointOf(TRUTH, heap));
    }
    GcModel start = new GcModel(1, 0, 0, 1, PARALLEL, GcConstantEstimator.CURRENT_HEADROOM);
    GcModel fitted = CurveFit.fit(start, points);
    assertThat(fitted.estimator()).isEqualTo(GcConstantEstimator.HISTORY_FIT);
    // The offset is found on a grid, so the curve is close, not exact; its predictions are what
    // matter.
    for (long heap : new long[] {650, 800, 1000, 1400, 2000}) {
      double truth = TRUTH.gcFraction(heap * MIB, LIVE);
      assertThat(fitted.gcFraction(heap * MIB, LIVE))
          .as("heap %d MiB", heap)
          .isCloseTo(truth, within(0.02 * truth));
    }
    assertThat(fitted.youngConstantBytes())
        .isCloseTo(TRUTH.youngConstantBytes(), within(1e-6 * TRUTH.youngConstantBytes()));
  }

  @Test
  void nonNegativeLineNeverReturnsANegativeCoefficient() {
    // Falling y against x would need a negative slope: the constrained answer is a flat line at
    // the mean (least squares with slope fixed at 0).
    CurveFit.Line line = CurveFit.nonNegativeLine(new double[] {1, 2, 3}, new double[] {3, 2, 1});
    assertThat(line.slope()).isZero();
    assertThat(line.intercept()).isCloseTo(2, within(1e-12));
  }
}
