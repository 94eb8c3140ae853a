package dev.heapherd.harness;

import io.fabric8.kubernetes.client.Config;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.KubernetesClientBuilder;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;

/**
 * A real etcd, kube-apiserver and kube-controller-manager on 127.0.0.1, built from their Go modules
 * by e2e/control-plane and started and stopped by its scripts (which stop exactly the processes
 * they started, by pid).
 */
public final class ControlPlane implements AutoCloseable {

  /**
   * Start-up generates certificates and waits for readiness (seconds); without a prebuilt
   * HEAPHERD_CONTROL_PLANE_BIN it also compiles the control plane, about 13 minutes on 2 cores.
   */
  private static final long START_TIMEOUT_SECONDS = 20 * 60;

  private static final long STOP_TIMEOUT_SECONDS = 60;

  private final Path scripts;
  private final Path state;
  private final Path kubeconfig;

  private ControlPlane(Path scripts, Path state, Path kubeconfig) {
    this.scripts = scripts;
    this.state = state;
    this.kubeconfig = kubeconfig;
  }

  /**
   * The scripts' folder: {@code heapherd.control-plane.dir} when set, else e2e/control-plane of the
   * repository the tests run in, found from the working folder upwards.
   */
  public static Path scripts() {
    String configured = System.getProperty("heapherd.control-plane.dir", "");
    if (!configured.isBlank()) {
      return Path.of(configured).toAbsolutePath().normalize();
    }
    for (Path dir = Path.of("").toAbsolutePath(); dir != null; dir = dir.getParent()) {
      Path scripts = dir.resolve("e2e/control-plane");
      if (Files.isRegularFile(scripts.resolve("start.sh"))) {
        return scripts;
      }
    }
    throw new IllegalStateException(
        "e2e/control-plane not found above "
            + Path.of("").toAbsolutePath()
            + "; set heapherd.control-plane.dir");
  }

  /** Starts a control plane with its state in a fresh temporary folder. */
  public static ControlPlane start() throws IOException, InterruptedException {
    return start(Files.createTempDirectory("heapherd-control-plane"));
  }

  /** Starts a control plane with its state in {@code state}. */
  public static ControlPlane start(Path state) throws IOException, InterruptedException {
    Files.createDirectories(state);
    Path log = state.resolve("start.out");
    Process p =
        new ProcessBuilder(
                List.of("bash", scripts().resolve("start.sh").toString(), state.toString()))
            .redirectErrorStream(true)
            .redirectOutput(log.toFile())
            .start();
    if (!p.waitFor(START_TIMEOUT_SECONDS, TimeUnit.SECONDS) || p.exitValue() != 0) {
      p.destroyForcibly();
      String out = Files.readString(log, StandardCharsets.UTF_8);
      stop(state);
      throw new IllegalStateException("control plane did not start:\n" + out);
    }
    return new ControlPlane(scripts(), state, state.resolve("kubeconfig"));
  }

  /** The admin kubeconfig. */
  public Path kubeconfig() {
    return kubeconfig;
  }

  /** A client with admin rights. */
  public KubernetesClient client() throws IOException {
    return new KubernetesClientBuilder()
        .withConfig(Config.fromKubeconfig(Files.readString(kubeconfig)))
        .build();
  }

  /**
   * How long a new CRD may take to be served: seconds on an idle machine, but a two-core CI runner
   * busy with other JVMs once took over a minute; our allowance.
   */
  private static final long ESTABLISHED_TIMEOUT_SECONDS = 180;

  /** Creates the CRD in {@code file} and waits until the API server serves it. */
  public static void installCrd(KubernetesClient client, Path file) throws IOException {
    io.fabric8.kubernetes.api.model.apiextensions.v1.CustomResourceDefinition crd;
    try (var in = Files.newInputStream(file)) {
      crd =
          io.fabric8.kubernetes.client.utils.Serialization.unmarshal(
              in, io.fabric8.kubernetes.api.model.apiextensions.v1.CustomResourceDefinition.class);
    }
    client.resource(crd).create();
    var resource =
        client
            .apiextensions()
            .v1()
            .customResourceDefinitions()
            .withName(crd.getMetadata().getName());
    try {
      resource.waitUntilCondition(
          c ->
              c != null
                  && c.getStatus() != null
                  // the API server can publish a status before its first condition
                  && c.getStatus().getConditions() != null
                  && c.getStatus().getConditions().stream()
                      .anyMatch(
                          x -> x.getType().equals("Established") && x.getStatus().equals("True")),
          ESTABLISHED_TIMEOUT_SECONDS,
          TimeUnit.SECONDS);
    } catch (io.fabric8.kubernetes.client.KubernetesClientTimeoutException e) {
      var now = resource.get();
      throw new IllegalStateException(
          "CRD "
              + crd.getMetadata().getName()
              + " not established within "
              + ESTABLISHED_TIMEOUT_SECONDS
              + " s; its conditions: "
              + (now == null || now.getStatus() == null ? "none" : now.getStatus().getConditions()),
          e);
    }
  }

  @Override
  public void close() throws IOException, InterruptedException {
    stop(state);
  }

  private static void stop(Path state) throws IOException, InterruptedException {
    Process p =
        new ProcessBuilder(
                List.of("bash", scripts().resolve("stop.sh").toString(), state.toString()))
            .redirectErrorStream(true)
            .redirectOutput(state.resolve("stop.out").toFile())
            .start();
    if (!p.waitFor(STOP_TIMEOUT_SECONDS, TimeUnit.SECONDS) || p.exitValue() != 0) {
      throw new IllegalStateException(
          "control plane did not stop cleanly:\n" + Files.readString(state.resolve("stop.out")));
    }
  }
}
