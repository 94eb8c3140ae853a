package dev.heapherd.rollout;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.List;
import java.util.OptionalLong;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * Checks the options heapherd writes against the real JVM: whatever heap flags the options held,
 * quoted or not, the JVM started with them runs with the heap heapherd set.
 */
class JvmOptionsJvmIT {

  private static final long NEW_HEAP_BYTES = 96L << 20;

  private static final Pattern MAX_HEAP_SIZE =
      Pattern.compile("size_t\\s+MaxHeapSize\\s+=\\s+(\\d+)");

  private static final long JVM_TIMEOUT_SECONDS = 60;

  @ParameterizedTest
  @ValueSource(
      strings = {
        "-Xmx2g \"-Xmx512m\"",
        "-Xmx2g '-Xmx512m'",
        "-Xmx2g -X\"mx512m\"",
        "\"-XX:MaxHeapSize=512m\" -Dname=\"a b\"",
        "'-XX:MaxRAMPercentage=90'",
        "-Xms256m \"-Xmx512m\""
      })
  void theJvmRunsWithTheHeapWritten(String options) throws Exception {
    // Reference: HotSpot's own reading of JAVA_TOOL_OPTIONS, via -XX:+PrintFlagsFinal.
    assertThat(maxHeapSizeUnder(options)).as("the JVM honours the options as given").isPresent();
    String written = JvmOptions.withHeap(options, NEW_HEAP_BYTES, OptionalLong.empty());
    assertThat(maxHeapSizeUnder(written)).hasValue(NEW_HEAP_BYTES);
  }

  @ParameterizedTest
  @ValueSource(strings = {"-Dmsg=\"a -Xmx1g", "-Xmx1g '"})
  void theJvmRefusesWhatHeapherdRefuses(String options) throws Exception {
    assertThat(JvmOptions.problem(options)).isPresent();
    Result result = run(options);
    assertThat(result.exitCode()).isNotZero();
    assertThat(result.output()).contains("Unmatched quote");
  }

  private static OptionalLong maxHeapSizeUnder(String options) throws Exception {
    Result result = run(options);
    Matcher m = MAX_HEAP_SIZE.matcher(result.output());
    return result.exitCode() == 0 && m.find()
        ? OptionalLong.of(Long.parseLong(m.group(1)))
        : OptionalLong.empty();
  }

  private static Result run(String options) throws IOException, InterruptedException {
    String java = Path.of(System.getProperty("java.home"), "bin", "java").toString();
    ProcessBuilder builder =
        new ProcessBuilder(List.of(java, "-XX:+PrintFlagsFinal", "-version"))
            .redirectErrorStream(true);
    builder.environment().put("JAVA_TOOL_OPTIONS", options);
    Process process = builder.start();
    try {
      byte[] out = process.getInputStream().readAllBytes();
      assertThat(process.waitFor(JVM_TIMEOUT_SECONDS, TimeUnit.SECONDS)).isTrue();
      return new Result(process.exitValue(), new String(out, StandardCharsets.UTF_8));
    } finally {
      process.destroyForcibly();
    }
  }

  private record Result(int exitCode, String output) {}
}
