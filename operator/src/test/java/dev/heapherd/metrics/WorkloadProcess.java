package dev.heapherd.metrics;

import static org.awaitility.Awaitility.await;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.heapherd.harness.PrometheusServer;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;

/**
 * A real JVM running the synthetic workload (e2e/workload), started and stopped by the test by its
 * own process handle. Its {@code /truth} endpoint reports what it holds and the JDK's own
 * GarbageCollectorMXBean totals: the outside reference for the estimates.
 */
final class WorkloadProcess implements AutoCloseable {

  /** Built by the e2e/workload module; failsafe passes the paths. */
  static final Path JAR = Path.of(System.getProperty("heapherd.workload.jar", "missing"));

  static final Path OTEL_AGENT = Path.of(System.getProperty("heapherd.otel.agent", "missing"));

  /** Generous: a JVM with the OpenTelemetry agent starts slowly on two busy cores. */
  private static final Duration STARTUP = Duration.ofSeconds(180);

  private static final ObjectMapper JSON = new ObjectMapper();

  /** What to run. */
  record Spec(
      String instrumentation,
      String collectorFlag,
      long maxHeapMib,
      long liveMib,
      double replaceMibPerSecond,
      double garbageMibPerSecond) {}

  private final Process process;
  private final int port;
  private final int metricsPort;
  private final HttpClient http = HttpClient.newHttpClient();

  private WorkloadProcess(Process process, int port, int metricsPort) {
    this.process = process;
    this.port = port;
    this.metricsPort = metricsPort;
  }

  static WorkloadProcess start(Spec spec, Path logDir, String name, String... jvmFlags)
      throws IOException {
    int port = PrometheusServer.freePort();
    int metricsPort = "otel".equals(spec.instrumentation()) ? PrometheusServer.freePort() : port;
    List<String> command = new ArrayList<>();
    command.add(Path.of(System.getProperty("java.home"), "bin", "java").toString());
    if ("otel".equals(spec.instrumentation())) {
      command.add("-javaagent:" + OTEL_AGENT);
    }
    command.addAll(List.of("-Xmx" + spec.maxHeapMib() + "m", spec.collectorFlag()));
    command.addAll(List.of(jvmFlags));
    command.addAll(
        List.of(
            "-jar",
            JAR.toString(),
            "--live-mib",
            Long.toString(spec.liveMib()),
            "--replace-mib-per-second",
            Double.toString(spec.replaceMibPerSecond()),
            "--garbage-mib-per-second",
            Double.toString(spec.garbageMibPerSecond()),
            "--port",
            Integer.toString(port),
            "--instrumentation",
            spec.instrumentation()));
    ProcessBuilder builder =
        new ProcessBuilder(command)
            .redirectErrorStream(true)
            .redirectOutput(logDir.resolve(name + ".log").toFile());
    Map<String, String> env = builder.environment();
    if ("otel".equals(spec.instrumentation())) {
      env.put("OTEL_METRICS_EXPORTER", "prometheus");
      env.put("OTEL_EXPORTER_PROMETHEUS_HOST", "127.0.0.1");
      env.put("OTEL_EXPORTER_PROMETHEUS_PORT", Integer.toString(metricsPort));
      env.put("OTEL_TRACES_EXPORTER", "none");
      env.put("OTEL_LOGS_EXPORTER", "none");
      env.put("OTEL_METRIC_EXPORT_INTERVAL", "1000");
    }
    WorkloadProcess started = new WorkloadProcess(builder.start(), port, metricsPort);
    await()
        .atMost(STARTUP)
        .pollInterval(Duration.ofMillis(250))
        .ignoreExceptions()
        .until(() -> started.get("/ready").statusCode() == 200);
    return started;
  }

  /** Where Prometheus scrapes this JVM. */
  String metricsHostPort() {
    return "127.0.0.1:" + metricsPort;
  }

  /** The workload's own account of itself and the JDK's collector totals. */
  JsonNode truth() throws IOException, InterruptedException {
    return JSON.readTree(get("/truth").body());
  }

  /** Total GC milliseconds over all collectors, from GarbageCollectorMXBean. */
  long gcMillis() throws IOException, InterruptedException {
    long total = 0;
    for (JsonNode c : truth().path("collectors")) {
      total += c.path("collectionTimeMillis").asLong();
    }
    return total;
  }

  private HttpResponse<String> get(String path) throws IOException, InterruptedException {
    return http.send(
        HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + port + path))
            .timeout(Duration.ofSeconds(5))
            .build(),
        HttpResponse.BodyHandlers.ofString());
  }

  @Override
  public void close() {
    process.destroy();
    try {
      if (!process.waitFor(30, TimeUnit.SECONDS)) {
        process.destroyForcibly().waitFor();
      }
    } catch (InterruptedException e) {
      process.destroyForcibly();
      Thread.currentThread().interrupt();
    }
  }
}
