package dev.heapherd.synthetic;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.util.Random;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;

class RatePacerTest {

  private static final long TICK_NANOS = TimeUnit.MILLISECONDS.toNanos(10);
  private static final long SECOND_NANOS = TimeUnit.SECONDS.toNanos(1);

  @Test
  void aTickOnTimeGetsOneTicksWorth() {
    RatePacer pacer = RatePacer.of(1_000_000, TICK_NANOS);

    assertThat(pacer.bytesDue(TICK_NANOS, 0)).isEqualTo(10_000);
    assertThat(pacer.bytesDue(2 * TICK_NANOS, 10_000)).isEqualTo(10_000);
  }

  @Test
  void aLateTickCatchesUpButNoMoreThanTheCatchUpLimit() {
    RatePacer pacer = RatePacer.of(1_000_000, TICK_NANOS);

    // Three ticks late: the backlog of three ticks is within the limit of four.
    assertThat(pacer.bytesDue(3 * TICK_NANOS, 0)).isEqualTo(30_000);
    // A one-second stall: at most four ticks' worth now, the rest on later ticks.
    assertThat(pacer.bytesDue(SECOND_NANOS, 0)).isEqualTo(40_000);
  }

  @Test
  void aheadOfScheduleGivesNothingAndZeroRateNeverAllocates() {
    assertThat(RatePacer.of(1_000_000, TICK_NANOS).bytesDue(TICK_NANOS, 50_000)).isZero();
    assertThat(RatePacer.of(0, TICK_NANOS).bytesDue(SECOND_NANOS, 0)).isZero();
  }

  @Test
  void jitteryTicksStillHoldTheRateOnAverage() {
    double bytesPerSecond = 64.0 * 1024 * 1024;
    RatePacer pacer = RatePacer.of(bytesPerSecond, TICK_NANOS);
    Random random = new Random(42);
    long now = 0;
    long assigned = 0;
    // Ten simulated seconds of ticks arriving 0 to 25 ms apart (GC pauses, scheduling delays).
    while (now < 10 * SECOND_NANOS) {
      now += (long) (random.nextDouble() * 2.5 * TICK_NANOS);
      assigned += pacer.bytesDue(now, assigned);
    }

    double expected = bytesPerSecond * now / 1e9;
    // Behind by at most the backlog one late tick leaves: well under one percent of ten seconds.
    assertThat((double) assigned).isCloseTo(expected, within(expected * 0.01));
  }
}
