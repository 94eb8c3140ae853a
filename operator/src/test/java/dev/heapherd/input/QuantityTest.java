package dev.heapherd.input;

import static dev.heapherd.engine.Units.GIB;
import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import org.assertj.core.data.Percentage;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.junit.jupiter.params.provider.ValueSource;

class QuantityTest {

  // 123Mi, the value the Kubernetes memory examples all approximate.
  private static final long EXAMPLE_BYTES = 123L * MIB;

  // The decimal examples (129e6, 129M) are 0.02% above 123Mi; 1% says "roughly the same".
  private static final Percentage ROUGHLY = Percentage.withPercentage(1);

  // The memory examples from the Kubernetes docs "Resource Management for Pods and
  // Containers", which all mean roughly the same value.
  @ParameterizedTest
  @CsvSource({
    "128974848, 128974848",
    "129e6, 129000000",
    "129M, 129000000",
    "128974848000m, 128974848",
    "123Mi, 128974848"
  })
  void parsesKubernetesDocumentedExamples(String text, long expected) {
    assertThat(Quantity.parseBytes(text)).isEqualTo(expected);
    assertThat(Quantity.parseBytes(text)).isCloseTo(EXAMPLE_BYTES, ROUGHLY);
  }

  @ParameterizedTest
  @CsvSource({
    "0, 0",
    "1048576, 1048576",
    "1Ki, 1024",
    "1Mi, 1048576",
    "1Gi, 1073741824",
    "1Ti, 1099511627776",
    "1Pi, 1125899906842624",
    "1Ei, 1152921504606846976",
    "1k, 1000",
    "1M, 1000000",
    "1G, 1000000000",
    "1T, 1000000000000",
    "1P, 1000000000000000",
    "1E, 1000000000000000000",
    "1.5Gi, 1610612736",
    "0.5G, 500000000",
    "5., 5",
    ".5Ki, 512",
    "1e9, 1000000000",
    "12E3, 12000",
    "2E, 2000000000000000000",
    "1e+3, 1000",
    "1.5e3, 1500"
  })
  void parsesSuffixesAndNumberForms(String text, long expected) {
    assertThat(Quantity.parseBytes(text)).isEqualTo(expected);
  }

  @ParameterizedTest
  @CsvSource({"1m, 1", "1500m, 2", "0.1, 1", "1.0001Ki, 1025", "1e-3, 1", "1e-999999999, 1"})
  void roundsFractionsOfAByteUp(String text, long expected) {
    assertThat(Quantity.parseBytes(text)).isEqualTo(expected);
  }

  @Test
  void trimsSurroundingWhitespace() {
    assertThat(Quantity.parseBytes("  512Mi\n")).isEqualTo(512 * MIB);
  }

  @Test
  void keepsTheSign() {
    assertThat(Quantity.parseBytes("-256Mi")).isEqualTo(-256 * MIB);
    assertThat(Quantity.parseBytes("+256Mi")).isEqualTo(256 * MIB);
    assertThat(Quantity.parseBytes("-0")).isZero();
    // Rounding is away from zero, so a negative fraction mirrors the positive one.
    assertThat(Quantity.parseBytes("-1500m")).isEqualTo(-2);
  }

  @Test
  void acceptsTheLongRangeEndpoints() {
    assertThat(Quantity.parseBytes("9223372036854775807")).isEqualTo(Long.MAX_VALUE);
    assertThat(Quantity.parseBytes("-9223372036854775808")).isEqualTo(Long.MIN_VALUE);
    assertThat(Quantity.parseBytes("7Ei")).isEqualTo(7L << 60);
  }

  @ParameterizedTest
  @ValueSource(strings = {"9223372036854775808", "8Ei", "9.3E", "1e19", "1e999999999", "-8.1Ei"})
  void rejectsValuesBeyondALong(String text) {
    assertThatThrownBy(() -> Quantity.parseBytes(text))
        .isInstanceOf(IllegalArgumentException.class)
        .hasMessage(
            "\""
                + text
                + "\" is out of range: a quantity must fit in "
                + Long.MAX_VALUE
                + " bytes");
  }

  @Test
  void rejectsAnExponentThatDoesNotFitAnInt() {
    assertThatThrownBy(() -> Quantity.parseBytes("1e99999999999"))
        .isInstanceOf(IllegalArgumentException.class)
        .hasMessage("exponent out of range in \"1e99999999999\"");
  }

  @ParameterizedTest
  @CsvSource({
    "12GB, GB",
    "12gb, gb",
    "512MiB, MiB",
    "4Kb, Kb",
    "1gi, gi",
    "1K, K",
    "1e, e",
    "1E3.5, E3.5",
    "0x10, x10"
  })
  void rejectsUnknownUnits(String text, String unit) {
    assertThatThrownBy(() -> Quantity.parseBytes(text))
        .isInstanceOf(IllegalArgumentException.class)
        .hasMessage(
            "unknown unit \""
                + unit
                + "\" in \""
                + text
                + "\" (use Ki, Mi, Gi, Ti, Pi, Ei, m, k, M, G, T, P, E or plain bytes)");
  }

  @Test
  void unknownUnitMessageMatchesTheDocumentedShape() {
    assertThatThrownBy(() -> Quantity.parseBytes("12GB"))
        .hasMessage(
            "unknown unit \"GB\" in \"12GB\""
                + " (use Ki, Mi, Gi, Ti, Pi, Ei, m, k, M, G, T, P, E or plain bytes)");
  }

  @ParameterizedTest
  @ValueSource(strings = {"", "   ", "abc", "Gi", ".", "-", "+-1", "1.2.3", "1 Gi", "--1"})
  void rejectsTextThatIsNotAQuantity(String text) {
    assertThatThrownBy(() -> Quantity.parseBytes(text))
        .isInstanceOf(IllegalArgumentException.class)
        .hasMessage("not a quantity: \"" + text + "\"");
  }

  @Test
  void rejectsNull() {
    assertThatThrownBy(() -> Quantity.parseBytes(null))
        .isInstanceOf(IllegalArgumentException.class)
        .hasMessage("not a quantity: null");
  }

  @Test
  void keepsErrorMessagesOnOneLine() {
    assertThatThrownBy(() -> Quantity.parseBytes("1\nGi"))
        .hasMessage("not a quantity: \"1\\nGi\"")
        .hasMessageNotContaining("\n");
  }

  @ParameterizedTest
  @CsvSource({
    "0, 0",
    "1073741824, 1Gi",
    "2147483648, 2Gi",
    "1610612736, 1.50Gi",
    "1288490189, 1.20Gi",
    "536870912, 512Mi",
    "1048576, 1Mi",
    "524288, 0.5Mi",
    "1572864, 1.5Mi",
    "-268435456, -256Mi",
    "-1610612736, -1.50Gi",
    "-9223372036854775808, -8589934592Gi"
  })
  void formatsForTables(long bytes, String expected) {
    assertThat(Quantity.format(bytes)).isEqualTo(expected);
  }

  @Test
  void formattedWholeValuesParseBack() {
    for (long bytes : new long[] {MIB, 512 * MIB, 3 * GIB}) {
      assertThat(Quantity.parseBytes(Quantity.format(bytes))).isEqualTo(bytes);
    }
  }
}
