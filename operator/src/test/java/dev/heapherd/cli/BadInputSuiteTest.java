package dev.heapherd.cli;

import static dev.heapherd.cli.PlanInputs.POOL;
import static dev.heapherd.cli.PlanInputs.SNAPSHOT;
import static dev.heapherd.cli.PlanInputs.replaceOnce;
import static org.assertj.core.api.Assertions.assertThat;
import static org.junit.jupiter.api.Assertions.assertTimeoutPreemptively;
import static org.junit.jupiter.params.provider.Arguments.arguments;

import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.stream.Stream;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Generated bad input, by class (sizes, rates, names, structure, flags, manifests): every case
 * exits 2 within a few seconds with one line on stderr naming the problem, nothing on stdout, no
 * trace of a Java exception, raw control characters never echoed, and no file written.
 */
class BadInputSuiteTest {

  @TempDir Path dir;

  /** A case that takes longer has hung on its input: the guard, not a speed target. */
  private static final Duration NO_HANG = Duration.ofSeconds(30);

  private static final Path EXAMPLES = ExampleManifests.EXAMPLES;

  /** The example manifest's container limit and its name, each written once. */
  private static final String LIMIT = "limits:\n              memory: 1344Mi";

  private static final String NAME = "name: warehouse-sync\n  labels:";

  /** Values no size field may take, with the classes of mistake they stand for. */
  private static final List<String> BAD_SIZES =
      List.of(
          "512m",
          "1.5gb",
          "12GB",
          "-1Gi",
          "0",
          "lots",
          "true",
          "[1]",
          "{a: 1}",
          "9999999Ei",
          "1e400",
          "\"\"",
          "0.5",
          "1Gi\\n2Gi",
          "\"\\u001b[31m1Gi\"");

  /** Values no GC rate may take. */
  private static final List<String> BAD_RATES =
      List.of("1.5", "-0.01", "fast", ".nan", ".inf", "0.01d", "[0.01]", "2");

  /** Names Kubernetes would refuse, including ones that would break a terminal line. */
  private static final List<String> BAD_NAMES =
      List.of(
          "Ledger",
          "led ger",
          "\"led\\nger\"",
          "\"led\\u001b[2Jger\"",
          "-ledger",
          "ledger-",
          "\"" + "x".repeat(300) + "\"",
          "\"\"",
          "\"led/ger\"");

  static Stream<Arguments> cases() {
    List<Arguments> out = new ArrayList<>();
    for (String size : BAD_SIZES) {
      out.add(snapshotCase("snapshot liveBytes " + size, "liveBytes: 300Mi", "liveBytes: " + size));
      if (!size.equals("0")) {
        // No memory beyond the heap is a valid measurement.
        out.add(
            snapshotCase(
                "snapshot nonHeapBytes " + size, "nonHeapBytes: 150Mi", "nonHeapBytes: " + size));
      }
      out.add(poolCase("pool heapFloor " + size, "heapFloor: 256Mi", "heapFloor: " + size));
      out.add(poolCase("pool memoryBudget " + size, "memoryBudget: 12Gi", "memoryBudget: " + size));
    }
    for (String rate : BAD_RATES) {
      out.add(
          snapshotCase(
              "snapshot gcSecondsPerSecond " + rate,
              "gcSecondsPerSecond: 0.01",
              "gcSecondsPerSecond: " + rate));
    }
    for (String name : BAD_NAMES) {
      out.add(snapshotCase("snapshot name " + name, "- name: relay", "- name: " + name));
      out.add(poolCase("pool name " + name, "name: checkout", "name: " + name));
    }
    // Structure: what a tree would read silently wrong, or what is not a pool at all.
    out.add(poolCase("pool second document", "kind: HeapPool", "kind: HeapPool\n---\na: 1"));
    out.add(poolCase("pool alias", "heapFloor: 256Mi", "heapFloor: &f 256Mi\n    limitMargin: *f"));
    out.add(poolCase("pool unknown field", "mode: DryRun", "mode: DryRun\n  moed: Apply"));
    out.add(poolCase("pool mode typo", "mode: DryRun", "mode: apply"));
    out.add(poolCase("pool tab indentation", "  mode: DryRun", "\tmode: DryRun"));
    out.add(poolCase("pool list root", "apiVersion: heapherd.dev/v1alpha1", "- a"));
    out.add(
        poolCase(
            "pool query without selector",
            "  defaults:",
            "  metrics:\n    queries:\n      - signal: liveBytes\n        promql: up\n  defaults:"));
    out.add(
        snapshotCase(
            "snapshot duplicate key",
            "kind: Deployment\n    replicas: 4",
            "kind: Deployment\n    kind: Deployment\n    replicas: 4"));
    out.add(snapshotCase("snapshot alias", "liveBytes: 300Mi", "liveBytes: *x"));
    out.add(snapshotCase("snapshot window zero", "windowSeconds: 3600", "windowSeconds: 0"));
    // Flags checked before any request.
    for (String[] flags :
        List.of(
            new String[] {"--window-seconds", "0"},
            new String[] {"--window-seconds", "-60"},
            new String[] {"--timeout-seconds", "0"},
            new String[] {"--timeout-seconds", "100000"},
            new String[] {"--prometheus", "ftp://127.0.0.1:9"},
            new String[] {"--prometheus", "http:///x"},
            new String[] {"--prometheus", "file:///etc/passwd"})) {
      out.add(arguments("snapshot flag " + String.join(" ", flags), Kind.SNAPSHOT_FLAGS, flags));
    }
    // Manifests render must refuse before writing anything.
    for (String[] edit :
        List.of(
            new String[] {LIMIT, "limits:\n              memory: 512m"},
            new String[] {LIMIT, "limits:\n              memory: *m"},
            // A selector shared by alias: written anew, "*app" became the text "app".
            new String[] {
              "      app.kubernetes.io/name: warehouse-sync\n  template:\n    metadata:\n"
                  + "      labels:\n        app.kubernetes.io/name: warehouse-sync",
              "      app.kubernetes.io/name: &app warehouse-sync\n  template:\n    metadata:\n"
                  + "      labels:\n        app.kubernetes.io/name: *app"
            },
            new String[] {"-Xmx1g", "-Xmx1g \\\"-Dx=unclosed"},
            new String[] {NAME, "name: \"ware\\u001bhouse\"\n  labels:"},
            new String[] {NAME, "name: \"warehouse\\nsync\"\n  labels:"})) {
      out.add(arguments("manifest " + edit[1], Kind.MANIFEST, edit));
    }
    return out.stream();
  }

  private static Arguments snapshotCase(String name, String from, String to) {
    return arguments(name, Kind.SNAPSHOT, new String[] {from, to});
  }

  private static Arguments poolCase(String name, String from, String to) {
    return arguments(name, Kind.POOL, new String[] {from, to});
  }

  enum Kind {
    POOL,
    SNAPSHOT,
    SNAPSHOT_FLAGS,
    MANIFEST
  }

  @ParameterizedTest(name = "{0}")
  @MethodSource("cases")
  void isRefusedInOneLineWithoutWritingAnything(String name, Kind kind, String[] change)
      throws Exception {
    Path pool = Files.writeString(dir.resolve("pool.yaml"), POOL);
    Path snapshot = Files.writeString(dir.resolve("snapshot.yaml"), SNAPSHOT);
    Path manifests = ExampleManifests.copyInto(dir);
    Path output = dir.resolve("out.yaml");
    List<String> args = new ArrayList<>();
    switch (kind) {
      case POOL -> {
        Files.writeString(pool, replaceOnce(POOL, change[0], change[1]));
        args.addAll(List.of("plan", "--pool", pool.toString(), "--snapshot", snapshot.toString()));
      }
      case SNAPSHOT -> {
        Files.writeString(snapshot, replaceOnce(SNAPSHOT, change[0], change[1]));
        args.addAll(List.of("plan", "--pool", pool.toString(), "--snapshot", snapshot.toString()));
      }
      case SNAPSHOT_FLAGS -> {
        args.addAll(
            List.of(
                "snapshot",
                "--pool",
                pool.toString(),
                "--prometheus",
                SnapshotCommandTest.deadPrometheus(),
                "-o",
                output.toString()));
        args.addAll(List.of(change));
      }
      case MANIFEST -> {
        Path file = manifests.resolve("warehouse-sync.yaml");
        Files.writeString(file, replaceOnce(Files.readString(file), change[0], change[1]));
        args.addAll(
            List.of(
                "render",
                "--pool",
                EXAMPLES.resolve("pool.yaml").toString(),
                "--snapshot",
                EXAMPLES.resolve("snapshot.yaml").toString(),
                "--manifests",
                manifests.toString()));
      }
    }
    Map<String, String> before = ExampleManifests.contents(dir);

    PlanRun run =
        assertTimeoutPreemptively(NO_HANG, () -> PlanRun.run(args.toArray(String[]::new)));

    assertThat(run.exitCode())
        .as("exit code; stderr: %s", run.err())
        .isEqualTo(Main.EXIT_BAD_INPUT);
    assertThat(run.out()).as("stdout").isEmpty();
    assertThat(run.err().lines()).as("stderr lines of %s", run.err()).hasSize(1);
    assertThat(run.err())
        .startsWith("heapherd: ")
        .doesNotContain("Exception")
        .doesNotContain("\tat ")
        .doesNotContain("\u001b");
    assertThat(run.err().length()).as("stderr is cut").isLessThan(2500);
    assertThat(ExampleManifests.contents(dir)).as("no file written or changed").isEqualTo(before);
  }
}
