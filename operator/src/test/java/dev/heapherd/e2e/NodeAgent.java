package dev.heapherd.e2e;

import static org.awaitility.Awaitility.await;

import io.fabric8.kubernetes.client.KubernetesClient;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.concurrent.TimeUnit;

/**
 * Our node agent (e2e/node-agent) as a process: it binds pods and runs them as local JVMs, the
 * operator's from its image tarball.
 */
final class NodeAgent implements AutoCloseable {

  static final String NODE = "e2e-node";

  /** Long enough for the agent to stop every pod process it runs (its grace cap is 10 s). */
  private static final long STOP_SECONDS = 30;

  private final Process process;
  private final Path targets;

  private NodeAgent(Process process, Path targets) {
    this.process = process;
    this.targets = targets;
  }

  /** Starts the agent on the cluster of {@code kubeconfig}; returns once its Node is Ready. */
  static NodeAgent start(Path kubeconfig, Path dir, KubernetesClient client) throws IOException {
    Files.createDirectories(dir);
    Path image = Path.of(property("heapherd.operator.image"));
    if (!Files.isRegularFile(image)) {
      throw new IllegalStateException(
          "the operator's image " + image + " is missing: mvn package (./dev.sh image) builds it");
    }
    Path targets = dir.resolve("targets.json");
    Process p =
        new ProcessBuilder(
                List.of(
                    Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                    "-jar",
                    property("heapherd.node-agent.jar"),
                    "--kubeconfig=" + kubeconfig,
                    "--node-name=" + NODE,
                    "--state-dir=" + dir,
                    "--file-sd=" + targets,
                    "--workload-jar=" + property("heapherd.workload.jar"),
                    // The operator runs from the image the build made, as a cluster would run it.
                    "--operator-image=" + image,
                    "--max-back-off-seconds=5"))
            .redirectErrorStream(true)
            .redirectOutput(dir.resolve("agent.log").toFile())
            .start();
    NodeAgent agent = new NodeAgent(p, targets);
    await()
        .atMost(Duration.ofSeconds(60))
        .ignoreExceptions()
        .until(
            () ->
                client.nodes().withName(NODE).get().getStatus().getConditions().stream()
                    .anyMatch(c -> c.getType().equals("Ready") && c.getStatus().equals("True")));
    return agent;
  }

  /** The Prometheus file_sd list the agent keeps. */
  Path targets() {
    return targets;
  }

  @Override
  public void close() throws InterruptedException {
    process.destroy();
    if (!process.waitFor(STOP_SECONDS, TimeUnit.SECONDS)) {
      process.destroyForcibly().waitFor();
    }
  }

  private static String property(String name) {
    String value = System.getProperty(name);
    if (value == null) {
      throw new IllegalStateException(
          "system property " + name + " is not set (see operator/pom.xml)");
    }
    return value;
  }
}
