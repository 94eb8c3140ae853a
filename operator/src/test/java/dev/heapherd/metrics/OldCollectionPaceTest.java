package dev.heapherd.metrics;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import org.junit.jupiter.api.Test;

class OldCollectionPaceTest {

  private static final double MIB = 1024 * 1024;

  @Test
  void oldTimeIsTheMeanPauseTimesPromotionOverTheRoom() {
    // One 250 ms collection counted in a 60 s window (1/60 per second); 4 MiB/s promoted into
    // 160 MiB of room: one every 40 s, so 0.25 / 40 s/s.
    var pace =
        OldCollectionPace.of("Parallel", 0.25 / 60, 1.0 / 60, 4 * MIB, 280 * MIB, 120 * MIB)
            .orElseThrow();
    assertThat(pace.meanPauseSeconds()).isCloseTo(0.25, within(1e-12));
    assertThat(pace.collectionsPerSecond()).isCloseTo(1.0 / 40, within(1e-12));
    assertThat(pace.secondsPerSecond()).isCloseTo(0.25 / 40, within(1e-12));
    assertThat(pace.note())
        .contains("0.0063 s/s from its pace", "250 ms", "every 40 s", "160 MiB", "0.0042 s/s");
  }

  @Test
  void onlyStopTheWorldCollectorsWithEveryInputArePaced() {
    assertThat(OldCollectionPace.of("Serial", 0.01, 0.02, 1e6, 3e8, 1e8)).isPresent();
    // G1's and the concurrent collectors' old time is mostly concurrent phases, not paced pauses.
    assertThat(OldCollectionPace.of("G1", 0.01, 0.02, 1e6, 3e8, 1e8)).isEmpty();
    assertThat(OldCollectionPace.of("Parallel", 0, 0, 1e6, 3e8, 1e8)).isEmpty();
    assertThat(OldCollectionPace.of("Parallel", 0.01, 0.02, 0, 3e8, 1e8)).isEmpty();
    assertThat(OldCollectionPace.of("Parallel", 0.01, 0.02, 1e6, 1e8, 1e8)).isEmpty();
  }
}
