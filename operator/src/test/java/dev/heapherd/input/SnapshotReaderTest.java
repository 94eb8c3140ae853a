package dev.heapherd.input;

import static dev.heapherd.cli.PlanInputs.POOL;
import static dev.heapherd.cli.PlanInputs.SNAPSHOT;
import static dev.heapherd.cli.PlanInputs.replaceOnce;
import static dev.heapherd.cli.PlanInputs.write;
import static dev.heapherd.engine.Units.GIB;
import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;
import static org.junit.jupiter.params.provider.Arguments.arguments;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import dev.heapherd.cli.PlanRun;
import java.nio.file.Path;
import java.time.Instant;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;
import org.junit.jupiter.params.provider.ValueSource;

class SnapshotReaderTest {

  @TempDir Path dir;

  @Test
  void readsEveryFieldAndDefaultsTheOptionalOnes() throws Exception {
    Snapshot snapshot = SnapshotReader.read(write(dir, "snapshot.yaml", SNAPSHOT));

    assertThat(snapshot.capturedAt()).isEqualTo(Instant.parse("2026-11-30T09:00:00Z"));
    assertThat(snapshot.windowSeconds()).isEqualTo(3600);
    assertThat(snapshot.workloads())
        .extracting(Snapshot.Workload::name)
        .containsExactly("ledger", "quoter", "relay");
    Snapshot.Workload ledger = snapshot.workloads().get(0);
    assertThat(ledger.kind()).isEqualTo("StatefulSet");
    assertThat(ledger.replicas()).isEqualTo(2);
    assertThat(ledger.collector()).isEqualTo("G1");
    assertThat(ledger.heapMaxBytes()).isEqualTo(2 * GIB);
    assertThat(ledger.liveBytes()).isEqualTo(900 * MIB);
    assertThat(ledger.gcSecondsPerSecond()).isEqualTo(0.02);
    assertThat(ledger.youngGcSecondsPerSecond()).isEqualTo(0.004);
    assertThat(ledger.nonHeapBytes()).isEqualTo(300 * MIB);
    assertThat(ledger.offsetBytes()).isZero();
    assertThat(ledger.promotionBytesPerSecond()).isEmpty();
    assertThat(ledger.collectorBytesPerSecond()).isEmpty();
  }

  @Test
  void readsJsonLikeTheSameYaml() throws Exception {
    String json = new ObjectMapper().writeValueAsString(new YAMLMapper().readTree(SNAPSHOT));
    assertThat(json).startsWith("{\"capturedAt\":");

    Snapshot fromJson = SnapshotReader.read(write(dir, "snapshot.json", json));

    assertThat(fromJson).isEqualTo(SnapshotReader.read(write(dir, "snapshot.yaml", SNAPSHOT)));
  }

  @Test
  void pointsAtTheFieldInsideJson() throws Exception {
    String json = new ObjectMapper().writeValueAsString(new YAMLMapper().readTree(SNAPSHOT));
    Path snapshot =
        write(
            dir, "snapshot.json", replaceOnce(json, "\"liveBytes\":\"300Mi\"", "\"liveBytes\":-1"));

    PlanRun.plan(write(dir, "pool.yaml", POOL), snapshot)
        .assertRejected(snapshot, "workloads[2].liveBytes", "must be positive");
  }

  @Test
  void reportsMalformedJsonWithLineAndColumn() throws Exception {
    // The comma after windowSeconds is missing: the JSON reader points at the token after it.
    String json =
        "{\"capturedAt\": \"2026-11-30T09:00:00Z\",\n"
            + " \"windowSeconds\": 3600\n"
            + " \"workloads\": []}\n";
    Path snapshot = write(dir, "snapshot.json", json);

    PlanRun.plan(write(dir, "pool.yaml", POOL), snapshot)
        .assertRejected(snapshot, "line 3, column 2", "malformed JSON");
  }

  @Test
  void reportsAMissingFile() throws Exception {
    Path snapshot = dir.resolve("absent.yaml");

    PlanRun.plan(write(dir, "pool.yaml", POOL), snapshot)
        .assertRejected(snapshot, "", "no such file");
  }

  @ParameterizedTest
  @ValueSource(strings = {"", "\n", "# metrics will go here\n", "---\n"})
  void reportsAnEmptyFile(String text) throws Exception {
    Path snapshot = write(dir, "snapshot.yaml", text);

    PlanRun.plan(write(dir, "pool.yaml", POOL), snapshot).assertRejected(snapshot, "", "is empty");
  }

  @Test
  void rejectsADocumentThatIsAList() throws Exception {
    Path snapshot = write(dir, "snapshot.yaml", "- name: relay\n");

    PlanRun.plan(write(dir, "pool.yaml", POOL), snapshot)
        .assertRejected(snapshot, "", "must be a mapping of fields, got a list");
  }

  @Test
  void rejectsAnEmptyWorkloadList() throws Exception {
    Path snapshot =
        write(
            dir,
            "snapshot.yaml",
            "capturedAt: 2026-11-30T09:00:00Z\nwindowSeconds: 3600\nworkloads: []\n");

    PlanRun.plan(write(dir, "pool.yaml", POOL), snapshot)
        .assertRejected(snapshot, "workloads", "must list at least one workload");
  }

  @Test
  void rejectsWorkloadsThatAreNotAList() throws Exception {
    Path snapshot =
        write(
            dir,
            "snapshot.yaml",
            "capturedAt: 2026-11-30T09:00:00Z\nwindowSeconds: 3600\nworkloads: {}\n");

    PlanRun.plan(write(dir, "pool.yaml", POOL), snapshot)
        .assertRejected(snapshot, "workloads", "must be a list");
  }

  @ParameterizedTest(name = "{0}")
  @MethodSource("badSnapshots")
  void rejectsBadSnapshotsInOneLine(
      String what, String from, String to, String where, String problem) throws Exception {
    Path snapshot = write(dir, "snapshot.yaml", replaceOnce(SNAPSHOT, from, to));

    PlanRun.plan(write(dir, "pool.yaml", POOL), snapshot).assertRejected(snapshot, where, problem);
  }

  @ParameterizedTest(name = "{0}")
  @MethodSource("badSnapshots")
  void printsNothingForBadSnapshotsAsJsonEither(
      String what, String from, String to, String where, String problem) throws Exception {
    Path snapshot = write(dir, "snapshot.yaml", replaceOnce(SNAPSHOT, from, to));

    PlanRun.plan(write(dir, "pool.yaml", POOL), snapshot, "-o", "json")
        .assertRejected(snapshot, where, problem);
  }

  static Stream<Arguments> badSnapshots() {
    String relay = "workloads[2].";
    return Stream.of(
        // Units.
        arguments(
            "GB is not a unit",
            "heapMaxBytes: 768Mi",
            "heapMaxBytes: 12GB",
            relay + "heapMaxBytes",
            "unknown unit \"GB\""),
        arguments(
            "lower-case gb is not a unit",
            "liveBytes: 300Mi",
            "liveBytes: 1.5gb",
            relay + "liveBytes",
            "unknown unit \"gb\""),
        arguments(
            "m is milli, not mebi",
            "nonHeapBytes: 150Mi",
            "nonHeapBytes: 512m",
            relay + "nonHeapBytes",
            "thousandths of a byte"),
        arguments(
            "text that is no quantity",
            "liveBytes: 300Mi",
            "liveBytes: lots",
            relay + "liveBytes",
            "not a quantity"),
        arguments(
            "a boolean as a size",
            "heapMaxBytes: 768Mi",
            "heapMaxBytes: true",
            relay + "heapMaxBytes",
            "must be a byte count"),
        // Sizes that are not positive, or a live set that leaves no headroom.
        arguments(
            "zero liveBytes",
            "liveBytes: 300Mi",
            "liveBytes: 0",
            relay + "liveBytes",
            "must be positive"),
        arguments(
            "negative liveBytes",
            "liveBytes: 300Mi",
            "liveBytes: -300Mi",
            relay + "liveBytes",
            "must be positive"),
        arguments(
            "zero heapMaxBytes",
            "heapMaxBytes: 768Mi",
            "heapMaxBytes: 0",
            relay + "heapMaxBytes",
            "must be positive"),
        arguments(
            "negative heapMaxBytes",
            "heapMaxBytes: 768Mi",
            "heapMaxBytes: -1Gi",
            relay + "heapMaxBytes",
            "must be positive"),
        arguments(
            "negative nonHeapBytes",
            "nonHeapBytes: 150Mi",
            "nonHeapBytes: -1",
            relay + "nonHeapBytes",
            "must not be negative"),
        arguments(
            "live above the current heap",
            "liveBytes: 300Mi",
            "liveBytes: 1Gi",
            relay + "liveBytes",
            "not below the current heap 768Mi"),
        arguments(
            "live equal to the current heap",
            "liveBytes: 300Mi",
            "liveBytes: 768Mi",
            relay + "liveBytes",
            "not below the current heap 768Mi"),
        arguments(
            "offset leaving no headroom",
            "nonHeapBytes: 150Mi",
            "nonHeapBytes: 150Mi\n    offsetBytes: 468Mi",
            relay + "offsetBytes",
            "no headroom"),
        // Names, kinds and collectors.
        arguments(
            "duplicate workload name",
            "- name: relay",
            "- name: ledger",
            relay + "name",
            "duplicate workload name \"ledger\""),
        arguments(
            "unknown collector",
            "collector: ZGC",
            "collector: CMS",
            relay + "collector",
            "\"CMS\" is not one of G1, Parallel, Serial, Shenandoah, ZGC"),
        arguments(
            "unknown kind",
            "kind: StatefulSet",
            "kind: DaemonSet",
            "workloads[0].kind",
            "\"DaemonSet\" is not one of Deployment, StatefulSet"),
        arguments(
            "a number as the name",
            "- name: relay",
            "- name: 42",
            relay + "name",
            "must be a string, got 42 (put it in quotes)"),
        // Counts and rates.
        arguments(
            "zero replicas",
            "replicas: 4",
            "replicas: 0",
            relay + "replicas",
            "must be between 1 and"),
        arguments(
            "negative replicas",
            "replicas: 4",
            "replicas: -4",
            relay + "replicas",
            "must be between 1 and"),
        arguments(
            "fractional replicas",
            "replicas: 4",
            "replicas: 2.5",
            relay + "replicas",
            "must be a whole number, got 2.5"),
        arguments(
            "replicas as text",
            "replicas: 4",
            "replicas: four",
            relay + "replicas",
            "must be a whole number, got \"four\""),
        arguments(
            "gc rate as text",
            "gcSecondsPerSecond: 0.01",
            "gcSecondsPerSecond: fast",
            relay + "gcSecondsPerSecond",
            "must be a decimal number, got \"fast\""),
        arguments(
            "gc rate with a Java type suffix",
            "gcSecondsPerSecond: 0.01",
            "gcSecondsPerSecond: 0.01d",
            relay + "gcSecondsPerSecond",
            "must be a decimal number"),
        arguments(
            "more than all of each second in GC",
            "gcSecondsPerSecond: 0.01",
            "gcSecondsPerSecond: 1.5",
            relay + "gcSecondsPerSecond",
            "must be at most 1 (all of each second), got 1.5"),
        arguments(
            "negative gc rate",
            "gcSecondsPerSecond: 0.01",
            "gcSecondsPerSecond: -0.01",
            relay + "gcSecondsPerSecond",
            "must not be negative"),
        arguments(
            "young gc above total gc",
            "youngGcSecondsPerSecond: 0.002",
            "youngGcSecondsPerSecond: 0.02",
            relay + "youngGcSecondsPerSecond",
            "is above gcSecondsPerSecond"),
        arguments(
            "window as text",
            "windowSeconds: 3600",
            "windowSeconds: hour",
            "windowSeconds",
            "must be a whole number"),
        arguments(
            "zero window",
            "windowSeconds: 3600",
            "windowSeconds: 0",
            "windowSeconds",
            "must be between 1 and"),
        arguments(
            "timestamp without a time",
            "capturedAt: 2026-11-30T09:00:00Z",
            "capturedAt: 2026-11-30",
            "capturedAt",
            "must be a UTC timestamp"),
        // Numbers beyond what the arithmetic can hold must be bad input, not a wrapped-around plan
        // or an internal error.
        arguments(
            "heap beyond 64 bits",
            "heapMaxBytes: 768Mi",
            "heapMaxBytes: 99999999999999999999",
            relay + "heapMaxBytes",
            ""),
        arguments(
            "gc rate whose constant overflows",
            "gcSecondsPerSecond: 0.01",
            "gcSecondsPerSecond: 1.0e+300",
            relay + "gcSecondsPerSecond",
            ""),
        arguments(
            "offset whose sum with live overflows",
            "nonHeapBytes: 150Mi",
            "nonHeapBytes: 150Mi\n    offsetBytes: 9223372036854775807",
            relay + "offsetBytes",
            ""),
        arguments(
            "non-heap whose sum with the margin overflows",
            "nonHeapBytes: 150Mi",
            "nonHeapBytes: 9223372036854775807",
            relay + "nonHeapBytes",
            ""),
        // Missing and unknown fields.
        arguments(
            "missing collector", "    collector: ZGC\n", "", relay + "collector", "is required"),
        arguments(
            "missing liveBytes", "    liveBytes: 300Mi\n", "", relay + "liveBytes", "is required"),
        arguments(
            "missing windowSeconds", "windowSeconds: 3600\n", "", "windowSeconds", "is required"),
        arguments(
            "misspelt workload field",
            "youngGcSecondsPerSecond: 0.002",
            "youngGcSecondsPerSecnd: 0.002",
            relay + "youngGcSecondsPerSecnd",
            "unknown field"),
        arguments(
            "unknown top-level field",
            "windowSeconds: 3600",
            "window: 3600",
            "window",
            "unknown field"),
        // Malformed YAML: the line and column of the problem.
        arguments(
            "bad indentation",
            "    replicas: 4\n",
            "      replicas: 4\n",
            "line 24, column 15",
            "malformed YAML"),
        arguments(
            "unclosed bracket",
            "- name: relay",
            "- name: [relay",
            "line 23, column 9",
            "malformed YAML"),
        arguments(
            "tab indentation",
            "    collector: ZGC",
            "\tcollector: ZGC",
            "line 25, column 1",
            "TAB"),
        arguments(
            "duplicate key",
            "    replicas: 4\n",
            "    replicas: 4\n    replicas: 5\n",
            "line 25, column 13",
            "Duplicate field 'replicas'"));
  }
}
