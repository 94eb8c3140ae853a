package dev.heapherd.synthetic;

import static org.assertj.core.api.Assertions.assertThat;

import java.util.List;
import org.junit.jupiter.api.Test;

class MixBudgetTest {

  private static final List<SizeClass> MIX =
      List.of(new SizeClass(64, 0.5), new SizeClass(4096, 0.3), new SizeClass(65536, 0.2));
  private static final long[] ARRAY_BYTES = {80, 4112, 65552};

  @Test
  void splitsABudgetByByteShare() {
    int[] counts = new MixBudget(MIX, ARRAY_BYTES).take(1_000_000);

    assertThat(counts).containsExactly(6250, 72, 3);
  }

  @Test
  void carriesRemaindersSoSmallBudgetsStillMakeLargeArrays() {
    MixBudget budget = new MixBudget(MIX, ARRAY_BYTES);
    long[] made = new long[MIX.size()];
    long givenBytes = 0;
    // 10 KB a tick would never pay for a 64 KiB array at once; the carry makes it add up.
    for (int tick = 0; tick < 10_000; tick++) {
      int[] counts = budget.take(10_000);
      givenBytes += 10_000;
      for (int index = 0; index < counts.length; index++) {
        made[index] += counts[index];
      }
    }

    for (int index = 0; index < MIX.size(); index++) {
      double share = made[index] * ARRAY_BYTES[index] / (double) givenBytes;
      // Off by at most the one array still carried.
      assertThat(Math.abs(share - MIX.get(index).byteFraction()) * givenBytes)
          .isLessThanOrEqualTo(ARRAY_BYTES[index]);
    }
  }
}
