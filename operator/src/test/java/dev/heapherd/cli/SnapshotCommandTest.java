package dev.heapherd.cli;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.IOException;
import java.net.InetAddress;
import java.net.ServerSocket;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;

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
}
