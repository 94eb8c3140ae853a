package dev.heapherd.input;

import static org.assertj.core.api.Assertions.assertThat;

import org.junit.jupiter.api.Test;

class ErrorTextTest {

  @Test
  void escapesLineBreaksAndTerminalEscapes() {
    assertThat(ErrorText.quoted("a\nb\u001b[2Jc\td")).isEqualTo("\"a\\nb\\u001b[2Jc\\td\"");
    assertThat(ErrorText.oneLine("x\r\ny\u2028z")).isEqualTo("x\\r\\ny\\u2028z");
  }

  @Test
  void cutsLongValuesAndSaysHowMuchWasLeftOut() {
    String quoted = ErrorText.quoted("n".repeat(1_000_000));
    assertThat(quoted)
        .hasSizeLessThan(ErrorText.MAX_QUOTED_CHARS + 40)
        .endsWith("more characters)\"");
    assertThat(quoted).contains("(999800 more characters)");
    assertThat(ErrorText.oneLine("m".repeat(5000))).hasSizeLessThan(ErrorText.MAX_LINE_CHARS + 40);
  }

  @Test
  void keepsOrdinaryTextAsItIs() {
    assertThat(ErrorText.oneLine("pool.yaml: spec.mode: \"Aply\" is not one of"))
        .isEqualTo("pool.yaml: spec.mode: \"Aply\" is not one of");
  }
}
