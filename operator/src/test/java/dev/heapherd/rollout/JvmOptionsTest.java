package dev.heapherd.rollout;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import java.util.OptionalLong;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.junit.jupiter.params.provider.NullSource;
import org.junit.jupiter.params.provider.ValueSource;

class JvmOptionsTest {

  private static final long KIB = 1024L;
  private static final long MIB = 1024L * KIB;
  private static final long GIB = 1024L * MIB;

  private static final OptionalLong NO_INITIAL = OptionalLong.empty();

  @ParameterizedTest
  @CsvSource({
    "-Xmx1g",
    "-XX:MaxHeapSize=1073741824",
    "-XX:MaxRAMPercentage=75.0",
    "-XX:MaxRAM=4g",
    "-XX:MaxRAMFraction=2"
  })
  void replacesEachKindOfMaxHeapTokenInPlace(String heapToken) {
    String options = "-XX:+UseG1GC " + heapToken + " -Dapp.mode=prod";

    assertThat(JvmOptions.withHeap(options, 2 * GIB, NO_INITIAL))
        .isEqualTo("-XX:+UseG1GC -Xmx2g -Dapp.mode=prod");
  }

  @Test
  void insertsAtTheFirstRemovedTokenAndDropsTheRest() {
    String options = "-Da=1 -XX:MaxRAMPercentage=50 -Db=2 -Xmx1g -XX:MaxHeapSize=3g -Dc=3";

    assertThat(JvmOptions.withHeap(options, 1536 * MIB, NO_INITIAL))
        .isEqualTo("-Da=1 -Xmx1536m -Db=2 -Dc=3");
  }

  @Test
  void appendsWhenNoHeapTokenIsPresent() {
    assertThat(JvmOptions.withHeap("-XX:+UseG1GC -Dx=y", 2 * GIB, NO_INITIAL))
        .isEqualTo("-XX:+UseG1GC -Dx=y -Xmx2g");
  }

  @ParameterizedTest
  @NullSource
  @ValueSource(strings = {"", "   ", "\t\n"})
  void handlesMissingOptions(String options) {
    assertThat(JvmOptions.withHeap(options, 2 * GIB, NO_INITIAL)).isEqualTo("-Xmx2g");
    assertThat(JvmOptions.withHeap(options, 2 * GIB, OptionalLong.of(GIB)))
        .isEqualTo("-Xmx2g -Xms1g");
    assertThat(JvmOptions.maxHeapBytes(options)).isEmpty();
  }

  @Test
  void keepsOtherTokensVerbatimIncludingQuotedOnes() {
    String options =
        "-javaagent:/x/y.jar=opt -Dgreeting=\"hello world\" -Dx=-Xmx1g"
            + " '-Dsingle=a  b' -XX:+UseG1GC -Xmn512m -Xss1m -Xmx1g";

    assertThat(JvmOptions.withHeap(options, 2 * GIB, NO_INITIAL))
        .isEqualTo(
            "-javaagent:/x/y.jar=opt -Dgreeting=\"hello world\" -Dx=-Xmx1g"
                + " '-Dsingle=a  b' -XX:+UseG1GC -Xmn512m -Xss1m -Xmx2g");
  }

  @Test
  void quotedWhitespaceDoesNotSplitAToken() {
    // "-Xmx1g" inside the quotes is part of the property value, not a token of its own.
    String options = "-Dargs=\"--verbose -Xmx1g\" -Xms256m";

    assertThat(JvmOptions.withHeap(options, GIB, NO_INITIAL))
        .isEqualTo("-Dargs=\"--verbose -Xmx1g\" -Xms256m -Xmx1g");
    assertThat(JvmOptions.maxHeapBytes(options)).isEmpty();
  }

  @Test
  void refusesAnUnmatchedQuoteAsTheJvmDoes() {
    // HotSpot exits with "Unmatched quote in JAVA_TOOL_OPTIONS" (checked in JvmOptionsJvmIT).
    assertThatThrownBy(() -> JvmOptions.withHeap("-Dmsg=\"a -Xmx1g", GIB, NO_INITIAL))
        .isInstanceOf(IllegalArgumentException.class)
        .hasMessageContaining("unmatched double quote");
    assertThat(JvmOptions.problem("-Dmsg='a"))
        .hasValueSatisfying(p -> assertThat(p).contains("single"));
    assertThat(JvmOptions.maxHeapBytes("-Xmx1g \"")).isEmpty();
    assertThat(JvmOptions.problem("-Dmsg='a b' -Xmx1g")).isEmpty();
  }

  @ParameterizedTest
  @ValueSource(
      strings = {
        "-Xmx2g \"-Xmx8g\"",
        "-Xmx2g '-Xmx8g'",
        "-Xmx2g -X\"mx8g\"",
        "-Xmx2g \"-XX:MaxHeapSize=8g\"",
        "'-XX:MaxRAMPercentage=90' -Xmx2g"
      })
  void replacesQuotedHeapFlagsBecauseTheJvmReadsThemUnquoted(String options) {
    // The JVM drops the quotes and honours the flag, so it is a heap flag like any other.
    assertThat(JvmOptions.withHeap(options, 3 * GIB, NO_INITIAL)).isEqualTo("-Xmx3g");
  }

  @Test
  void readsAQuotedMaxHeapAsTheJvmDoes() {
    assertThat(JvmOptions.maxHeapBytes("-Xmx2g \"-Xmx8g\"")).hasValue(8 * GIB);
  }

  @Test
  void collapsesRunsOfWhitespaceToSingleSpaces() {
    assertThat(JvmOptions.withHeap("  -Da=1 \t\n -Xmx1g   -Db=2  ", GIB, NO_INITIAL))
        .isEqualTo("-Da=1 -Xmx1g -Db=2");
  }

  @Test
  void youngGenerationSizeIsNotAHeapLimit() {
    assertThat(JvmOptions.withHeap("-Xmn512m", 4 * GIB, OptionalLong.of(GIB)))
        .isEqualTo("-Xmn512m -Xmx4g -Xms1g");
    assertThat(JvmOptions.maxHeapBytes("-Xmn512m")).isEmpty();
  }

  @Test
  void initialHeapReplacesEveryInitialHeapToken() {
    String options =
        "-Da=1 -Xms256m -Xmx1g -XX:InitialHeapSize=128m -XX:InitialRAMPercentage=10 -Db=2";

    assertThat(JvmOptions.withHeap(options, 2 * GIB, OptionalLong.of(512 * MIB)))
        .isEqualTo("-Da=1 -Xmx2g -Xms512m -Db=2");
  }

  @Test
  void initialHeapGoesRightAfterTheMaxHeap() {
    assertThat(JvmOptions.withHeap("-Da=1 -Xmx1g -Db=2", 2 * GIB, OptionalLong.of(GIB)))
        .isEqualTo("-Da=1 -Xmx2g -Xms1g -Db=2");
    assertThat(JvmOptions.withHeap("-Da=1", 2 * GIB, OptionalLong.of(GIB)))
        .isEqualTo("-Da=1 -Xmx2g -Xms1g");
  }

  @Test
  void keepsInitialHeapTokensWhenNoInitialHeapIsGiven() {
    String options = "-Xms512m -XX:InitialHeapSize=256m -XX:InitialRAMPercentage=10 -Xmx1g";

    assertThat(JvmOptions.withHeap(options, 2 * GIB, NO_INITIAL))
        .isEqualTo("-Xms512m -XX:InitialHeapSize=256m -XX:InitialRAMPercentage=10 -Xmx2g");
  }

  @Test
  void lowersAnInitialHeapThatWouldExceedTheNewMaxHeap() {
    String options = "-Xms4g -XX:InitialHeapSize=3g -Xmx8g";

    assertThat(JvmOptions.withHeap(options, 1536 * MIB, NO_INITIAL))
        .isEqualTo("-Xms1536m -XX:InitialHeapSize=1536m -Xmx1536m");
  }

  @Test
  void keepsAnInitialHeapEqualToTheNewMaxHeapVerbatim() {
    assertThat(JvmOptions.withHeap("-Xms1024M -Xmx4g", GIB, NO_INITIAL))
        .isEqualTo("-Xms1024M -Xmx1g");
  }

  @ParameterizedTest
  @CsvSource({
    "2147483648, -Xmx2g",
    "1610612736, -Xmx1536m",
    "1049600, -Xmx1025k",
    "1000000, -Xmx1000000",
    "1, -Xmx1",
    "1099511627776, -Xmx1024g"
  })
  void writesSizesInTheLargestExactUnit(long bytes, String expected) {
    assertThat(JvmOptions.withHeap(null, bytes, NO_INITIAL)).isEqualTo(expected);
  }

  @ParameterizedTest
  @ValueSource(longs = {0, -1, Long.MIN_VALUE})
  void rejectsANonPositiveMaxHeap(long maxHeapBytes) {
    assertThatThrownBy(() -> JvmOptions.withHeap("-Xmx1g", maxHeapBytes, NO_INITIAL))
        .isInstanceOf(IllegalArgumentException.class)
        .hasMessage("max heap must be positive, got " + maxHeapBytes);
  }

  @ParameterizedTest
  @ValueSource(longs = {0, -1, 3 * GIB})
  void rejectsAnInitialHeapOutsideOneByteToTheMaxHeap(long initialHeapBytes) {
    assertThatThrownBy(() -> JvmOptions.withHeap("", 2 * GIB, OptionalLong.of(initialHeapBytes)))
        .isInstanceOf(IllegalArgumentException.class)
        .hasMessageContaining("initial heap must be positive");
  }

  @ParameterizedTest
  @CsvSource({
    "-Xmx1g, 1073741824",
    "-Xmx1G, 1073741824",
    "-Xmx512m, 536870912",
    "-Xmx512M, 536870912",
    "-Xmx64k, 65536",
    "-Xmx64K, 65536",
    "-Xmx1t, 1099511627776",
    "-Xmx1T, 1099511627776",
    "-Xmx1048576, 1048576",
    "-XX:MaxHeapSize=2g, 2147483648",
    "-XX:MaxHeapSize=4194304, 4194304"
  })
  void readsTheMaxHeap(String options, long expected) {
    assertThat(JvmOptions.maxHeapBytes(options)).hasValue(expected);
  }

  @Test
  void lastMaxHeapWins() {
    assertThat(JvmOptions.maxHeapBytes("-Xmx1g -Dx=y -XX:MaxHeapSize=2g -Xmx3g")).hasValue(3 * GIB);
    assertThat(JvmOptions.maxHeapBytes("-Xmx3g -XX:MaxHeapSize=512m")).hasValue(512 * MIB);
  }

  @Test
  void ignoresFlagsThatOnlyInfluenceTheMaxHeap() {
    assertThat(JvmOptions.maxHeapBytes("-XX:MaxRAMPercentage=75 -XX:MaxRAM=4g -Xms1g")).isEmpty();
  }

  @Test
  void ignoresTokensThatOnlyContainAHeapFlag() {
    assertThat(JvmOptions.maxHeapBytes("-Dx=-Xmx1g \"-Dy=a -Xmx2g\"")).isEmpty();
  }

  @ParameterizedTest
  @ValueSource(
      strings = {
        "-Xmx",
        "-Xmx1gb",
        "-Xmx1.5g",
        "-Xmx-1g",
        "-Xmx99999999999999999999",
        "-Xmx1g -Xmxlots"
      })
  void reportsNoMaxHeapWhenTheEffectiveOneIsNotASize(String options) {
    assertThat(JvmOptions.maxHeapBytes(options)).isEmpty();
  }

  @Test
  void sizeThatOverflowsALongIsNotASize() {
    assertThat(JvmOptions.maxHeapBytes("-Xmx9999999999t")).isEmpty();
  }

  @Test
  void leavesAnUnreadableInitialHeapVerbatim() {
    assertThat(JvmOptions.withHeap("-Xmslots -Xmx8g", GIB, NO_INITIAL))
        .isEqualTo("-Xmslots -Xmx1g");
  }
}
