package dev.heapherd.metrics;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * The profiles' PromQL checked by Prometheus' own tool, promtool (Debian's prometheus package, the
 * same build the ITs run), without a server: every query parses, and the heap-limit and
 * old-capacity queries, evaluated by promtool's PromQL engine on series shaped like each exporter's
 * and carrying the pool maxima of a real JVM, give that JVM's MaxHeapSize and old pool maximum.
 */
class QueryProfilesHeapLimitTest {

  /** Installed next to /usr/bin/prometheus by Debian's package. */
  private static final Path PROMTOOL = Path.of("/usr/bin/promtool");

  /** Window rendered into the templates; the test series span twice it. */
  private static final long WINDOW_SECONDS = 30;

  /** Evaluation time of the rule tests: the series run from 0s to here, one sample a second. */
  private static final long EVAL_SECONDS = 2 * WINDOW_SECONDS;

  private static final String NAMESPACE = "limits";
  private static final String POD = "probe-0";

  /** Generous for a JVM that compiles one source file and prints a few lines. */
  private static final Duration PROCESS_TIMEOUT = Duration.ofSeconds(60);

  /**
   * Prints the heap MemoryPoolMXBeans' maxima and the MaxHeapSize the JVM settled on (its
   * HotSpotDiagnosticMXBean), one {@code name<TAB>bytes} line each: the reference figures.
   */
  private static final String PROBE =
      String.join(
          "\n",
          "import java.lang.management.*;",
          "public class Probe {",
          "  public static void main(String[] args) {",
          "    for (MemoryPoolMXBean p : ManagementFactory.getMemoryPoolMXBeans()) {",
          "      if (p.getType() == MemoryType.HEAP) {",
          "        System.out.println(p.getName() + \"\\t\" + p.getUsage().getMax());",
          "      }",
          "    }",
          "    var d = ManagementFactory.getPlatformMXBean(",
          "        com.sun.management.HotSpotDiagnosticMXBean.class);",
          "    System.out.println(\"MaxHeapSize\\t\" + d.getVMOption(\"MaxHeapSize\").getValue());",
          "  }",
          "}",
          "");

  @Test
  void everyQueryOfEveryProfileParses(@TempDir Path dir) throws Exception {
    StringBuilder rules = new StringBuilder("groups:\n  - name: profiles\n    rules:\n");
    int n = 0;
    for (QueryProfile profile : QueryProfiles.all()) {
      for (Signal signal : Signal.values()) {
        for (String query : profile.queries(signal, selector(), WINDOW_SECONDS)) {
          rules
              .append("      - record: q_")
              .append(n++)
              .append("\n        expr: ")
              .append(yamlString(query))
              .append('\n');
        }
      }
    }
    Path file = dir.resolve("profiles.yml");
    Files.writeString(file, rules);
    Result result = run(dir, PROMTOOL.toString(), "check", "rules", file.toString());
    assertThat(result.exitCode()).as(result.output()).isZero();
    assertThat(result.output()).contains("SUCCESS: " + n + " rules found");
  }

  @ParameterizedTest(name = "{0}")
  @ValueSource(strings = {"-XX:+UseSerialGC", "-XX:+UseParallelGC", "-XX:+UseG1GC"})
  void heapLimitIsMaxHeapSizeAndOldCapacityIsTheOldPoolMaximum(
      String collectorFlag, @TempDir Path dir) throws Exception {
    // An odd size on purpose: HotSpot aligns 333m up, so the reference is what the JVM made of it.
    Map<String, Long> probe = probe(dir, collectorFlag, "-Xmx333m");
    long maxHeapSize = probe.remove("MaxHeapSize");
    long oldMax =
        probe.entrySet().stream()
            .filter(e -> e.getKey().matches(QueryProfiles.OLD_POOLS))
            .mapToLong(Map.Entry::getValue)
            .sum();
    StringBuilder tests =
        new StringBuilder("rule_files: []\nevaluation_interval: 1s\ntests:\n  - interval: 1s\n");
    tests.append("    input_series:\n");
    for (var pool : probe.entrySet()) {
      // Micrometer: jvm_memory_max_bytes{area, id}; client_java: jvm_memory_pool_max_bytes{pool};
      // the OpenTelemetry agent: jvm_memory_limit_bytes{jvm_memory_type, jvm_memory_pool_name}.
      // Pools without a maximum report -1 in the first two; the agent leaves the series out.
      series(tests, "jvm_memory_max_bytes", "area=\"heap\",id=\"" + pool.getKey() + "\"", pool);
      series(tests, "jvm_memory_pool_max_bytes", "pool=\"" + pool.getKey() + "\"", pool);
      if (pool.getValue() >= 0) {
        series(
            tests,
            "jvm_memory_limit_bytes",
            "jvm_memory_type=\"heap\",jvm_memory_pool_name=\"" + pool.getKey() + "\"",
            pool);
      }
    }
    tests.append("    promql_expr_test:\n");
    for (QueryProfile profile : QueryProfiles.all()) {
      expect(tests, profile, Signal.HEAP_MAX_BYTES, maxHeapSize);
      expect(tests, profile, Signal.OLD_CAPACITY_BYTES, oldMax);
    }
    Path file = dir.resolve("limits_test.yml");
    Files.writeString(file, tests);
    Result result = run(dir, PROMTOOL.toString(), "test", "rules", file.toString());
    assertThat(result.exitCode())
        .as("probe " + probe + ", MaxHeapSize " + maxHeapSize + "\n" + result.output())
        .isZero();
  }

  private static void series(
      StringBuilder out, String metric, String labels, Map.Entry<String, Long> pool) {
    out.append("      - series: ")
        .append(
            yamlString(
                metric + "{namespace=\"" + NAMESPACE + "\",pod=\"" + POD + "\"," + labels + "}"))
        .append("\n        values: '")
        .append(pool.getValue())
        .append("+0x")
        .append(EVAL_SECONDS)
        .append("'\n");
  }

  /** The profile's first template for the signal, expected to give {@code bytes} for the pod. */
  private static void expect(StringBuilder out, QueryProfile profile, Signal signal, long bytes) {
    String query = profile.queries(signal, selector(), WINDOW_SECONDS).get(0);
    out.append("      - expr: ")
        .append(yamlString(query))
        .append("\n        eval_time: ")
        .append(EVAL_SECONDS)
        .append("s\n        exp_samples:\n          - labels: ")
        .append(yamlString("{namespace=\"" + NAMESPACE + "\",pod=\"" + POD + "\"}"))
        .append("\n            value: ")
        .append(bytes)
        .append('\n');
  }

  private static String selector() {
    return "namespace=\"" + NAMESPACE + "\"";
  }

  /** A YAML single-quoted scalar: quotes doubled, nothing else escaped. */
  private static String yamlString(String s) {
    return "'" + s.replace("'", "''") + "'";
  }

  /** Heap pool maxima and MaxHeapSize of a JVM of this JDK started with {@code flags}. */
  private static Map<String, Long> probe(Path dir, String... flags) throws Exception {
    Path source = dir.resolve("Probe.java");
    Files.writeString(source, PROBE);
    List<String> command = new ArrayList<>();
    command.add(Path.of(System.getProperty("java.home"), "bin", "java").toString());
    command.addAll(List.of(flags));
    command.add(source.toString());
    Result result = run(dir, command.toArray(String[]::new));
    assertThat(result.exitCode()).as(result.output()).isZero();
    Map<String, Long> out = new LinkedHashMap<>();
    for (String line : result.output().split("\n")) {
      String[] parts = line.split("\t");
      if (parts.length == 2) {
        out.put(parts[0], Long.parseLong(parts[1].trim()));
      }
    }
    assertThat(out).containsKey("MaxHeapSize");
    return out;
  }

  private record Result(int exitCode, String output) {}

  /** Runs a command to its end, stopping it by its own handle if it overruns. */
  private static Result run(Path dir, String... command) throws IOException, InterruptedException {
    Path log = Files.createTempFile(dir, "out", ".txt");
    Process process =
        new ProcessBuilder(command)
            .directory(dir.toFile())
            .redirectErrorStream(true)
            .redirectOutput(log.toFile())
            .start();
    try {
      if (!process.waitFor(PROCESS_TIMEOUT.toSeconds(), TimeUnit.SECONDS)) {
        throw new IllegalStateException(String.join(" ", command) + " did not finish");
      }
    } finally {
      if (process.isAlive()) {
        process.destroyForcibly().waitFor();
      }
    }
    return new Result(process.exitValue(), Files.readString(log));
  }
}
