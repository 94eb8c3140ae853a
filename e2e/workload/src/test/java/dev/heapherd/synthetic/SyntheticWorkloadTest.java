package dev.heapherd.synthetic;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

class SyntheticWorkloadTest {

  private final ByteArrayOutputStream out = new ByteArrayOutputStream();
  private final ByteArrayOutputStream err = new ByteArrayOutputStream();

  @Test
  void badOptionPrintsOneLineAndExitsTwo() {
    int exitCode = run(List.of("--port", "http"));

    assertThat(exitCode).isEqualTo(2);
    assertThat(err.toString(StandardCharsets.UTF_8))
        .isEqualTo(
            "synthetic-workload: --port: expected a whole number from 0 to 65535, got 'http'"
                + System.lineSeparator());
    assertThat(out.toString(StandardCharsets.UTF_8)).isEmpty();
  }

  @Test
  void liveSetLargerThanTheHeapIsRejectedBeforeAllocating() {
    long tooManyMib = Runtime.getRuntime().maxMemory() / (1024 * 1024) + 1;

    int exitCode = run(List.of("--live-mib", Long.toString(tooManyMib)));

    assertThat(exitCode).isEqualTo(2);
    assertThat(err.toString(StandardCharsets.UTF_8)).contains("cannot fit in the maximum heap");
  }

  @Test
  void otelWithoutTheAgentIsRejected() {
    int exitCode = run(List.of("--instrumentation", "otel"));

    assertThat(exitCode).isEqualTo(2);
    assertThat(err.toString(StandardCharsets.UTF_8)).contains("-javaagent:");
  }

  @Test
  void helpPrintsUsageAndExitsZero() {
    int exitCode = run(List.of("--help"));

    assertThat(exitCode).isZero();
    assertThat(out.toString(StandardCharsets.UTF_8)).startsWith("usage:");
  }

  private int run(List<String> args) {
    return SyntheticWorkload.run(
        args,
        Map.of(),
        new PrintStream(out, true, StandardCharsets.UTF_8),
        new PrintStream(err, true, StandardCharsets.UTF_8));
  }
}
