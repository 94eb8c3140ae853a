package dev.heapherd.nodeagent;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.IOException;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import picocli.CommandLine;

class MainTest {

  @TempDir Path dir;
  private Path kubeconfig;
  private Path jar;

  @BeforeEach
  void files() throws IOException {
    kubeconfig = Files.writeString(dir.resolve("kubeconfig"), "apiVersion: v1\nkind: Config\n");
    jar = Files.writeString(dir.resolve("workload.jar"), "jar");
  }

  @Test
  void flagsBecomeSettings() {
    CommandLine cli = Main.commandLine();
    cli.parseArgs(
        "--kubeconfig",
        kubeconfig.toString(),
        "--node-name",
        "node-1",
        "--state-dir",
        dir.toString(),
        "--workload-jar",
        jar.toString(),
        "--operator-jar",
        jar.toString(),
        "--image",
        "team/app=" + jar + ",port-arg=--port={port}",
        "--memory",
        "4Gi",
        "--max-back-off-seconds",
        "8",
        "--memory-enforcement",
        "rss-polling");

    AgentSettings settings = ((Main) cli.getCommand()).settings();

    assertThat(settings.images())
        .extracting(ImageMapping::suffix)
        .containsExactly("synthetic-workload", "heapherd", "team/app");
    assertThat(settings.memory().toString()).isEqualTo("4Gi");
    assertThat(settings.maxBackOff()).isEqualTo(Duration.ofSeconds(8));
    assertThat(settings.maxGrace()).isEqualTo(Duration.ofSeconds(10));
    assertThat(settings.memoryEnforcement()).isEqualTo(MemoryEnforcement.Mode.RSS_POLLING);
    assertThat(settings.fileSd()).isEmpty();
  }

  @Test
  void badFlagsGetOneLineAndExitCode2() {
    assertThat(run("--node-name", "node-1"))
        .isEqualTo(
            "2 node-agent: Missing required options: '--kubeconfig=<kubeconfig>',"
                + " '--state-dir=<stateDir>' (see node-agent --help)");
    assertThat(run(common("Node_1", "--workload-jar", jar.toString())))
        .isEqualTo(
            "2 node-agent: --node-name must be lower-case letters, digits, '-' and '.', got"
                + " 'Node_1'");
    assertThat(run(common("node-1")))
        .isEqualTo(
            "2 node-agent: give at least one of --workload-jar, --operator-jar, --operator-image or --image");
    assertThat(run(common("node-1", "--workload-jar", jar.toString(), "--memory", "lots")))
        .isEqualTo(
            "2 node-agent: --memory must be a Kubernetes quantity such as 2, 500m or 8Gi, got"
                + " 'lots'");
    assertThat(
            run(
                common(
                    "node-1", "--workload-jar", jar.toString(), "--memory-enforcement", "cgroup")))
        .isEqualTo(
            "2 node-agent: --memory-enforcement must be auto, cgroup-v2 or rss-polling, got"
                + " 'cgroup'");
    assertThat(run(common("node-1", "--workload-jar", dir.resolve("missing.jar").toString())))
        .isEqualTo(
            "2 node-agent: jar for image 'synthetic-workload' not found: "
                + dir.resolve("missing.jar"));
  }

  private String[] common(String node, String... more) {
    String[] base = {
      "--kubeconfig", kubeconfig.toString(), "--node-name", node, "--state-dir", dir.toString()
    };
    String[] all = new String[base.length + more.length];
    System.arraycopy(base, 0, all, 0, base.length);
    System.arraycopy(more, 0, all, base.length, more.length);
    return all;
  }

  /** The exit code and stderr, trimmed: one line expected. */
  private static String run(String... args) {
    StringWriter err = new StringWriter();
    CommandLine cli = Main.commandLine();
    cli.setErr(new PrintWriter(err));
    int code = cli.execute(args);
    return code + " " + err.toString().trim();
  }
}
