package dev.heapherd.nodeagent;

import static org.assertj.core.api.Assertions.assertThat;

import java.time.Duration;
import org.junit.jupiter.api.Test;

class BackOffTest {

  @Test
  void doublesFromOneSecondUpToTheCap() {
    BackOff backOff = new BackOff(Duration.ofSeconds(5));

    assertThat(backOff.after(Duration.ZERO)).isEqualTo(Duration.ofSeconds(1));
    assertThat(backOff.after(Duration.ZERO)).isEqualTo(Duration.ofSeconds(2));
    assertThat(backOff.after(Duration.ZERO)).isEqualTo(Duration.ofSeconds(4));
    assertThat(backOff.after(Duration.ZERO)).isEqualTo(Duration.ofSeconds(5));
    assertThat(backOff.after(Duration.ZERO)).isEqualTo(Duration.ofSeconds(5));
  }

  @Test
  void aRunOfTwiceTheCapStartsOver() {
    BackOff backOff = new BackOff(Duration.ofSeconds(5));
    backOff.after(Duration.ZERO);
    backOff.after(Duration.ZERO);

    assertThat(backOff.after(Duration.ofSeconds(9))).isEqualTo(Duration.ofSeconds(4));
    assertThat(backOff.after(Duration.ofSeconds(10))).isEqualTo(Duration.ofSeconds(1));
  }
}
