package dev.heapherd.lab;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import org.junit.jupiter.api.Test;

class OpsPacerTest {

  static final long SECOND = 1_000_000_000L;

  @Test
  void waitsUntilTheNextSlotWhenOnPace() {
    OpsPacer pacer = OpsPacer.of(10);
    OpsPacer.Step step = pacer.next(0, 0);
    assertThat(step.runNow()).isFalse();
    assertThat(step.waitNanos()).isEqualTo(SECOND / 10);
  }

  @Test
  void runsOneOperationPerDueSlot() {
    OpsPacer pacer = OpsPacer.of(10);
    OpsPacer.Step step = pacer.next(SECOND / 2, 3);
    assertThat(step.runNow()).isTrue();
    assertThat(step.scheduledOps()).isEqualTo(4);
    assertThat(step.droppedOps()).isZero();
  }

  @Test
  void dropsBacklogBeyondOneSecondInsteadOfBursting() {
    OpsPacer pacer = OpsPacer.of(10);
    // Ten seconds late: 100 slots due, only one second's worth (10) is made up.
    OpsPacer.Step step = pacer.next(10 * SECOND, 0);
    assertThat(step.droppedOps()).isEqualTo(90);
    assertThat(step.scheduledOps()).isEqualTo(91);
    long scheduled = step.scheduledOps();
    int burst = 1;
    while (pacer.next(10 * SECOND, scheduled).runNow()) {
      scheduled = pacer.next(10 * SECOND, scheduled).scheduledOps();
      burst++;
    }
    assertThat(burst).isEqualTo(10);
  }

  @Test
  void refusesANonPositiveRate() {
    assertThatThrownBy(() -> OpsPacer.of(0)).isInstanceOf(IllegalArgumentException.class);
  }
}
