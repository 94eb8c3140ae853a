package dev.heapherd.scale;

import java.io.IOException;
import java.net.URI;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Map;

/** The operator jar run as its own process with the chart's default JVM options. */
final class OperatorProcess implements AutoCloseable {

  private final Process process;
  private final URI metrics;
  private final long startedNanos;
  private final Path log;

  private OperatorProcess(Process process, URI metrics, long startedNanos, Path log) {
    this.process = process;
    this.metrics = metrics;
    this.startedNanos = startedNanos;
    this.log = log;
  }

  /** Starts {@code jar} against the control plane of {@code kubeconfig} and {@code prometheus}. */
  static OperatorProcess start(Path jar, Path kubeconfig, Prometheus prometheus, Path dir)
      throws IOException {
    List<String> command = new ArrayList<>();
    command.add(Path.of(System.getProperty("java.home"), "bin", "java").toString());
    command.addAll(Arrays.asList(ScaleBench.CHART_JAVA_OPTIONS.split(" ")));
    command.addAll(
        List.of(
            "-jar",
            jar.toString(),
            "operator",
            "--prometheus",
            prometheus.uri().toString(),
            "--http-address",
            "127.0.0.1:" + prometheus.operatorPort()));
    ProcessBuilder builder = new ProcessBuilder(command);
    builder.environment().put("KUBECONFIG", kubeconfig.toString());
    Path log = dir.resolve("operator.log");
    builder.redirectErrorStream(true).redirectOutput(log.toFile());
    long started = System.nanoTime();
    Process process = builder.start();
    return new OperatorProcess(
        process,
        URI.create("http://127.0.0.1:" + prometheus.operatorPort() + "/metrics"),
        started,
        log);
  }

  long startedNanos() {
    return startedNanos;
  }

  /** Fails when the operator has exited, naming its log. */
  void checkAlive() {
    if (!process.isAlive()) {
      throw new IllegalStateException(
          "the operator exited " + process.exitValue() + "; see " + log);
    }
  }

  /** Every series of its /metrics, summed by name. */
  Map<String, Double> counters() throws IOException, InterruptedException {
    return ScaleBench.sums(ScaleBench.get(metrics));
  }

  /** Heap in use right after a full collection the bench asks for (jcmd GC.run). */
  long heapAfterGcBytes() throws IOException, InterruptedException {
    Path jcmd = Path.of(System.getProperty("java.home"), "bin", "jcmd");
    Process p =
        new ProcessBuilder(jcmd.toString(), Long.toString(process.pid()), "GC.run")
            .redirectErrorStream(true)
            .start();
    p.getInputStream().readAllBytes();
    p.waitFor();
    // The JVM's own memory pools, as the operator's /metrics serves them (Micrometer binders).
    String text = ScaleBench.get(metrics);
    long used = 0;
    for (String line : text.split("\n")) {
      if (line.startsWith("jvm_memory_used_bytes{") && line.contains("area=\"heap\"")) {
        used += (long) Double.parseDouble(line.substring(line.lastIndexOf(' ') + 1));
      }
    }
    return used;
  }

  /** A memory figure of /proc/PID/status, such as VmRSS or VmHWM (peak). */
  long rssBytes(String field) throws IOException {
    for (String line :
        Files.readAllLines(Path.of("/proc", Long.toString(process.pid()), "status"))) {
      if (line.startsWith(field + ":")) {
        String[] parts = line.trim().split("\\s+");
        return Long.parseLong(parts[1]) * 1024;
      }
    }
    return -1;
  }

  @Override
  public void close() throws InterruptedException {
    ScaleBench.stop(process, 30);
  }
}
