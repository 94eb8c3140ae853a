package dev.heapherd.cli;

import static org.assertj.core.api.Assertions.assertThat;

import dev.heapherd.input.Snapshot;
import dev.heapherd.input.SnapshotReader;
import dev.heapherd.metrics.PrometheusEndpoint;
import java.io.IOException;
import java.net.InetAddress;
import java.net.ServerSocket;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/** The Prometheus side of the command line when Prometheus cannot answer. */
class SnapshotCommandTest {

  private static final Path POOL = Path.of("..", "docs", "examples", "pool.yaml");

  /** A loopback port nobody listens on: bound, read, released. */
  static String deadPrometheus() throws IOException {
    try (ServerSocket socket = new ServerSocket(0, 1, InetAddress.getLoopbackAddress())) {
      return "http://127.0.0.1:" + socket.getLocalPort();
    }
  }

  @Test
  void snapshotHoldsEveryKnownWorkloadAndSaysWhyWhenPrometheusIsDown() throws IOException {
    PlanRun run =
        PlanRun.run(
            "snapshot",
            "--pool",
            POOL.toString(),
            "--prometheus",
            deadPrometheus(),
            "--timeout-seconds",
            "2");
    assertThat(run.exitCode()).isEqualTo(Main.EXIT_NOTHING_MEASURED);
    assertThat(run.err()).contains("held billing-ledger").contains("cannot connect");
    assertThat(run.out()).contains("held:").contains("name: rate-quoter");
  }

  @Test
  void planFromADownPrometheusIsRefusedInOneLineWithTheReasons() throws IOException {
    PlanRun run = PlanRun.run("plan", "--pool", POOL.toString(), "--prometheus", deadPrometheus());
    assertThat(run.exitCode()).isEqualTo(Main.EXIT_BAD_INPUT);
    assertThat(run.out()).isEmpty();
    assertThat(run.err().strip().lines()).hasSize(1);
    assertThat(run.err()).contains("no workload was measured").contains("cannot connect");
  }

  @Test
  void planNeedsExactlyOneSource() {
    PlanRun run = PlanRun.run("plan", "--pool", POOL.toString());
    assertThat(run.exitCode()).isEqualTo(Main.EXIT_BAD_INPUT);
    assertThat(run.err()).contains("exactly one of --snapshot or --prometheus");
  }

  @ParameterizedTest
  @CsvSource(
      delimiter = '|',
      value = {
        "--window-seconds|0|--window-seconds: must be between 10 and 604800, got 0",
        "--window-seconds|-60|--window-seconds: must be between 10 and 604800, got -60",
        "--timeout-seconds|0|--timeout-seconds: the timeout must be between 1 and 600 seconds",
        "--prometheus|ftp://127.0.0.1:9090|must start with http:// or https://",
        "--prometheus|http:///api|the Prometheus URL has no host"
      })
  void badMetricsFlagsAreRefusedInOneLineBeforeAnyRequest(String flag, String value, String message)
      throws IOException {
    List<String> args =
        new ArrayList<>(
            List.of("snapshot", "--pool", POOL.toString(), "--prometheus", deadPrometheus()));
    args.add(flag);
    args.add(value);
    PlanRun run = PlanRun.run(args.toArray(String[]::new));
    assertThat(run.exitCode()).isEqualTo(Main.EXIT_BAD_INPUT);
    assertThat(run.out()).isEmpty();
    assertThat(run.err().strip().lines()).hasSize(1);
    assertThat(run.err()).contains(message).doesNotContain("Exception").doesNotContain("\tat ");
  }

  @Test
  void aTokenFileWithALineBreakIsRefusedWithoutShowingTheToken(@TempDir Path dir)
      throws IOException {
    String secret = "s3cr3t-token-do-not-print";
    Path tokenFile = Files.writeString(dir.resolve("token"), secret + "\nsecond-line\n");
    PlanRun run =
        PlanRun.run(
            "snapshot",
            "--pool",
            POOL.toString(),
            "--prometheus",
            deadPrometheus(),
            "--bearer-token-file",
            tokenFile.toString());
    assertThat(run.exitCode()).isEqualTo(Main.EXIT_BAD_INPUT);
    assertThat(run.err()).contains("--bearer-token-file").contains("line breaks");
    assertThat(run.out() + run.err()).doesNotContain("s3cr3t").doesNotContain("second-line");
  }

  @ParameterizedTest
  @CsvSource({"--bearer-token-file, /dev/zero", "--ca-file, /dev/zero"})
  void aDeviceOrHugeFileForACredentialIsRefusedBeforeItIsRead(String flag, String device)
      throws IOException {
    // /dev/zero never ends: read whole, it ran the JVM out of memory.
    PlanRun run =
        PlanRun.run(
            "snapshot",
            "--pool",
            POOL.toString(),
            "--prometheus",
            deadPrometheus().replace("http://", "https://"),
            flag,
            device);
    assertThat(run.exitCode()).isEqualTo(Main.EXIT_BAD_INPUT);
    assertThat(run.out()).isEmpty();
    assertThat(run.err().strip().lines()).hasSize(1);
    assertThat(run.err()).contains(flag).contains("not a regular file");
  }

  @Test
  void aTokenFileLargerThanAnyTokenIsRefused(@TempDir Path dir) throws IOException {
    Path tokenFile =
        Files.writeString(
            dir.resolve("token"), "x".repeat(PrometheusEndpoint.MAX_TOKEN_FILE_BYTES + 1));
    PlanRun run =
        PlanRun.run(
            "snapshot",
            "--pool",
            POOL.toString(),
            "--prometheus",
            deadPrometheus(),
            "--bearer-token-file",
            tokenFile.toString());
    assertThat(run.exitCode()).isEqualTo(Main.EXIT_BAD_INPUT);
    assertThat(run.err()).contains("--bearer-token-file").contains("larger than 64 KiB");
    assertThat(run.out() + run.err()).doesNotContain("xxxx");
  }

  @Test
  void aPasswordInThePrometheusUrlAppearsNeitherInTheSnapshotNorInErrors() throws IOException {
    String url = deadPrometheus().replace("http://", "http://reader:pw-9f3a-never-print@");
    PlanRun run =
        PlanRun.run(
            "snapshot", "--pool", POOL.toString(), "--prometheus", url, "--timeout-seconds", "2");
    assertThat(run.out()).contains("source: ").contains("held:");
    assertThat(run.out() + run.err()).doesNotContain("pw-9f3a-never-print");
  }

  @Test
  void aSnapshotWithEveryWorkloadHeldIsOneItsReaderAccepts(@TempDir Path dir) throws Exception {
    // Prometheus down: every workload is held and none measured; the file must still read.
    PlanRun run =
        PlanRun.run(
            "snapshot",
            "--pool",
            POOL.toString(),
            "--prometheus",
            deadPrometheus(),
            "--timeout-seconds",
            "2");
    Path file = Files.writeString(dir.resolve("snapshot.yaml"), run.out());
    Snapshot read = SnapshotReader.read(file);
    assertThat(read.workloads()).isEmpty();
    assertThat(read.held()).isNotEmpty();
  }
}
