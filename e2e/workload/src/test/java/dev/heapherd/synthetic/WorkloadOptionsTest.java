package dev.heapherd.synthetic;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

class WorkloadOptionsTest {

  private static final long MIB = 1024L * 1024L;

  @Test
  void defaultsApplyWhenNothingIsSet() throws OptionException {
    WorkloadOptions options = WorkloadOptions.parse(List.of(), Map.of());

    assertThat(options.liveBytes()).isEqualTo(64 * MIB);
    assertThat(options.replaceBytesPerSecond()).isEqualTo(1.0 * MIB);
    assertThat(options.garbageBytesPerSecond()).isEqualTo(32.0 * MIB);
    assertThat(options.objectSizes().classes())
        .containsExactly(
            new SizeClass(64, 0.5), new SizeClass(4096, 0.3), new SizeClass(65536, 0.2));
    assertThat(options.durationSeconds()).isZero();
    assertThat(options.port()).isEqualTo(8080);
    assertThat(options.instrumentation()).isEqualTo(Instrumentation.MICROMETER);
  }

  @Test
  void readsEveryFlagInBothSpellings() throws OptionException {
    WorkloadOptions options =
        WorkloadOptions.parse(
            List.of(
                "--live-mib",
                "128",
                "--replace-mib-per-second=2.5",
                "--garbage-mib-per-second",
                "0",
                "--object-sizes=1024:1",
                "--duration-seconds",
                "30",
                "--port=0",
                "--instrumentation",
                "client-java"),
            Map.of());

    assertThat(options)
        .isEqualTo(
            new WorkloadOptions(
                128 * MIB,
                2.5 * MIB,
                0,
                new ObjectSizeMix(List.of(new SizeClass(1024, 1.0))),
                30,
                0,
                Instrumentation.CLIENT_JAVA));
  }

  @Test
  void readsTheEnvironmentAndFlagsWin() throws OptionException {
    Map<String, String> environment =
        Map.of(
            "WORKLOAD_LIVE_MIB", "32",
            "WORKLOAD_PORT", "9000",
            "WORKLOAD_INSTRUMENTATION", "otel",
            "WORKLOAD_GARBAGE_MIB_PER_SECOND", " ");

    WorkloadOptions options = WorkloadOptions.parse(List.of("--port", "9100"), environment);

    assertThat(options.liveBytes()).isEqualTo(32 * MIB);
    assertThat(options.port()).isEqualTo(9100);
    assertThat(options.instrumentation()).isEqualTo(Instrumentation.OTEL);
    // A blank variable counts as unset, so the default applies.
    assertThat(options.garbageBytesPerSecond()).isEqualTo(32.0 * MIB);
  }

  @ParameterizedTest
  @CsvSource(
      delimiter = ';',
      value = {
        "--live-mib;abc;--live-mib: expected a number of MiB >= 0, got 'abc'",
        "--live-mib;-1;--live-mib: expected a number of MiB >= 0, got '-1'",
        "--replace-mib-per-second;NaN;--replace-mib-per-second: expected a number of MiB per"
            + " second >= 0, got 'NaN'",
        "--garbage-mib-per-second;Infinity;--garbage-mib-per-second: expected a number of MiB per"
            + " second >= 0, got 'Infinity'",
        "--port;65536;--port: expected a whole number from 0 to 65535, got '65536'",
        "--port;80.5;--port: expected a whole number from 0 to 65535, got '80.5'",
        "--duration-seconds;-3;--duration-seconds: expected a whole number >= 0, got '-3'",
        "--instrumentation;jmx;--instrumentation: expected one of micrometer|client-java|otel, got"
            + " 'jmx'",
        "--object-sizes;64:0.5;--object-sizes: fractions must sum to 1, they sum to 0.5",
        "--object-sizes;64;--object-sizes: expected bytes:fraction pairs separated by commas, got"
            + " '64'",
        "--object-sizes;0:1;--object-sizes: size 0 must be between 1 and 2147483639 bytes",
        "--object-sizes;64:0.5,64:0.5;--object-sizes: size 64 appears more than once",
        "--object-sizes;64:0;--object-sizes: fraction 0 must be above 0 and at most 1",
        "--object-sizes;x:1;--object-sizes: size 'x' is not a whole number of bytes",
      })
  void rejectsBadValuesWithOneLineNamingTheFlag(String flag, String value, String message) {
    assertThatThrownBy(() -> WorkloadOptions.parse(List.of(flag, value), Map.of()))
        .isInstanceOf(OptionException.class)
        .hasMessage(message);
  }

  @Test
  void namesTheEnvironmentVariableWhenTheBadValueCameFromThere() {
    assertThatThrownBy(() -> WorkloadOptions.parse(List.of(), Map.of("WORKLOAD_LIVE_MIB", "lots")))
        .hasMessage("WORKLOAD_LIVE_MIB: expected a number of MiB >= 0, got 'lots'");
  }

  @Test
  void rejectsUnknownFlagsAndMissingValues() {
    assertThatThrownBy(() -> WorkloadOptions.parse(List.of("--heap-mib", "3"), Map.of()))
        .hasMessage("unknown option '--heap-mib' (--help lists the options)");
    assertThatThrownBy(() -> WorkloadOptions.parse(List.of("--live-mib"), Map.of()))
        .hasMessage("--live-mib: needs a value");
  }

  @Test
  void rejectsReplacementWithoutALiveSet() {
    assertThatThrownBy(
            () ->
                WorkloadOptions.parse(
                    List.of("--live-mib", "0", "--replace-mib-per-second", "1"), Map.of()))
        .hasMessage(
            "--replace-mib-per-second: cannot replace live objects when the live set is 0 MiB");
  }

  @Test
  void scalesHandRoundedFractionsToSumToOne() {
    ObjectSizeMix mix = ObjectSizeMix.parse("64:0.333, 4096:0.333, 65536:0.333");

    assertThat(mix.classes().stream().mapToDouble(SizeClass::byteFraction).sum())
        .isCloseTo(1.0, within(1e-12));
    assertThat(mix.classes().get(0).byteFraction()).isCloseTo(1.0 / 3, within(1e-12));
  }

  @Test
  void usageListsEveryFlagAndVariable() {
    String usage = WorkloadOptions.usage();

    for (WorkloadOption option : WorkloadOption.values()) {
      assertThat(usage).contains(option.flag()).contains(option.environmentVariable());
    }
  }
}
