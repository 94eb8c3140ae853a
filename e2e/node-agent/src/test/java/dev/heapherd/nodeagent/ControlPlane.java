package dev.heapherd.nodeagent;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.concurrent.TimeUnit;

/**
 * The real etcd, kube-apiserver and kube-controller-manager, started and stopped by the scripts in
 * e2e/control-plane (which record and stop exactly their own pids).
 */
final class ControlPlane implements AutoCloseable {

  /** The scripts' folder; failsafe passes the module's sibling, e2e/control-plane. */
  static final Path SCRIPTS =
      Path.of(System.getProperty("heapherd.control-plane.dir", "../control-plane"));

  /** start.sh builds the binaries first when they are not cached: about 8 min on 2 cores. */
  private static final Duration START = Duration.ofMinutes(20);

  /** stop.sh gives each server 10 s after TERM; three servers, plus slack. */
  private static final Duration STOP = Duration.ofSeconds(60);

  private final Path state;
  private final Path kubeconfig;

  private ControlPlane(Path state, Path kubeconfig) {
    this.state = state;
    this.kubeconfig = kubeconfig;
  }

  /** Runs start.sh with {@code state} as its folder; returns once the cluster takes pods. */
  static ControlPlane start(Path state) throws IOException, InterruptedException {
    Files.createDirectories(state);
    Path out = state.resolve("start.out");
    Path err = state.resolve("start.err");
    int code =
        run(List.of(SCRIPTS.resolve("start.sh").toString(), state.toString()), out, err, START);
    if (code != 0) {
      throw new IllegalStateException("start.sh exited " + code + ":\n" + Files.readString(err));
    }
    List<String> lines = Files.readAllLines(out);
    return new ControlPlane(state, Path.of(lines.get(lines.size() - 1).trim()));
  }

  Path kubeconfig() {
    return kubeconfig;
  }

  @Override
  public void close() throws IOException {
    int code;
    try {
      code =
          run(
              List.of(SCRIPTS.resolve("stop.sh").toString(), state.toString()),
              state.resolve("stop.out"),
              state.resolve("stop.err"),
              STOP);
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new IOException("interrupted while stopping the control plane", e);
    }
    if (code != 0) {
      throw new IllegalStateException(
          "stop.sh exited " + code + ":\n" + Files.readString(state.resolve("stop.err")));
    }
  }

  private static int run(List<String> command, Path out, Path err, Duration limit)
      throws IOException, InterruptedException {
    Process process =
        new ProcessBuilder(command)
            .redirectOutput(out.toFile())
            .redirectError(err.toFile())
            .start();
    if (!process.waitFor(limit.toSeconds(), TimeUnit.SECONDS)) {
      // The scripts clean up after themselves on TERM (start.sh stops what it started).
      process.destroy();
      process.waitFor();
      throw new IllegalStateException(command.get(0) + " took longer than " + limit);
    }
    return process.exitValue();
  }
}
