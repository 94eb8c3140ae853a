package dev.heapherd.engine;

import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.util.OptionalDouble;
import org.junit.jupiter.api.Test;

class GcConstantsTest {

  @Test
  void calibratesFromTheCurrentHeadroomWithoutTheHeapIndependentPart() {
    // 0.05 s/s of GC, 0.03 of it young collections; heap 1536 MiB, live 1024, offset 128:
    // k = (0.05 - 0.03) x (1536 - 1024 - 128) MiB.
    GcModel gc =
        PublishedRule.estimate(
            0.05,
            0.03,
            1536 * MIB,
            1024 * MIB,
            128 * MIB,
            OptionalDouble.empty(),
            OptionalDouble.empty());
    assertThat(gc.constantBytes()).isCloseTo(0.02 * 384 * MIB, within(1e-6));
    assertThat(gc.estimator()).isEqualTo(GcConstantEstimator.CURRENT_HEADROOM);
    // The curve passes through the measurement it was calibrated from.
    assertThat(gc.gcFraction(1536.0 * MIB, 1024.0 * MIB)).isCloseTo(0.05, within(1e-12));
  }

  @Test
  void youngDominatedWorkloadGetsASmallConstant() {
    GcModel total =
        PublishedRule.estimate(
            0.10, 0, 4096 * MIB, 1024 * MIB, 0, OptionalDouble.empty(), OptionalDouble.empty());
    GcModel split =
        PublishedRule.estimate(
            0.10, 0.095, 4096 * MIB, 1024 * MIB, 0, OptionalDouble.empty(), OptionalDouble.empty());
    assertThat(split.constantBytes()).isCloseTo(total.constantBytes() / 20, within(1e-3));
  }

  @Test
  void fallsBackToThePromotionModelWhenNoHeapDependentGcWasSeen() {
    // The published model's terms: k = g * L / s.
    GcModel gc =
        PublishedRule.estimate(
            0.01,
            0.01,
            2048 * MIB,
            1024 * MIB,
            0,
            OptionalDouble.of(4 * MIB),
            OptionalDouble.of(1024 * MIB));
    assertThat(gc.estimator()).isEqualTo(GcConstantEstimator.PROMOTION_MODEL);
    assertThat(gc.constantBytes()).isCloseTo(4.0 * MIB * 1024 * MIB / (1024 * MIB), within(1e-6));
  }

  @Test
  void refusesACurrentHeapWithNoHeadroomOverLivePlusOffset() {
    assertThatThrownBy(
            () ->
                PublishedRule.estimate(
                    0.01,
                    0,
                    1024 * MIB,
                    1000 * MIB,
                    24 * MIB,
                    OptionalDouble.empty(),
                    OptionalDouble.empty()))
        .isInstanceOf(IllegalArgumentException.class);
  }
}
