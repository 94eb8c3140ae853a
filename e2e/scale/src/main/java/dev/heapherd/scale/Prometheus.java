package dev.heapherd.scale;

import com.fasterxml.jackson.databind.ObjectMapper;
import dev.heapherd.harness.PrometheusServer;
import java.io.IOException;
import java.net.URI;
import java.net.URLEncoder;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;

/**
 * The real Prometheus server scraping one target per synthetic pod, plus the operator's own
 * metrics, with a configuration of the bench's own (slower scrapes than the tests' harness).
 */
final class Prometheus implements AutoCloseable {

  /** How long the server may take to answer /-/ready. */
  private static final Duration STARTUP = Duration.ofSeconds(60);

  private final Process process;
  private final int port;
  private final int operatorPort;

  private Prometheus(Process process, int port, int operatorPort) {
    this.process = process;
    this.port = port;
    this.operatorPort = operatorPort;
  }

  /** Starts a server under {@code dir} scraping every pod of {@code exporter}. */
  static Prometheus start(
      Path dir, SyntheticExporter exporter, List<SyntheticExporter.FakePod> pods)
      throws IOException, InterruptedException {
    Files.createDirectories(dir);
    int port = PrometheusServer.freePort();
    int operatorPort = PrometheusServer.freePort();
    List<Map<String, Object>> targets = new ArrayList<>();
    for (SyntheticExporter.FakePod p : pods) {
      targets.add(
          Map.of(
              "targets",
              List.of("127.0.0.1:" + exporter.port()),
              "labels",
              Map.of(
                  "namespace", p.namespace(),
                  "pod", p.pod(),
                  "__metrics_path__", SyntheticExporter.path(p))));
    }
    Path targetsFile = dir.resolve("pods.json");
    new ObjectMapper().writeValue(targetsFile.toFile(), targets);
    Path config = dir.resolve("prometheus.yml");
    Files.writeString(
        config,
        String.join(
            "\n",
            "global:",
            "  scrape_interval: " + ScaleBench.SCRAPE_SECONDS + "s",
            "  scrape_timeout: 10s",
            "scrape_configs:",
            "  - job_name: pods",
            "    file_sd_configs:",
            "      - files: ['" + targetsFile + "']",
            "  - job_name: operator",
            "    scrape_interval: 5s",
            "    static_configs:",
            "      - targets: ['127.0.0.1:" + operatorPort + "']",
            ""));
    Process process =
        new ProcessBuilder(
                PrometheusServer.BINARY.toString(),
                "--config.file=" + config,
                "--storage.tsdb.path=" + dir.resolve("data"),
                "--web.listen-address=127.0.0.1:" + port,
                "--log.level=warn")
            .redirectErrorStream(true)
            .redirectOutput(dir.resolve("prometheus.log").toFile())
            .start();
    Prometheus server = new Prometheus(process, port, operatorPort);
    Instant deadline = Instant.now().plus(STARTUP);
    while (true) {
      try {
        ScaleBench.get(server.uri().resolve("/-/ready"));
        return server;
      } catch (IOException e) {
        if (Instant.now().isAfter(deadline) || !process.isAlive()) {
          server.close();
          throw new IllegalStateException(
              "Prometheus did not start; see " + dir.resolve("prometheus.log"));
        }
        Thread.sleep(200);
      }
    }
  }

  URI uri() {
    return URI.create("http://127.0.0.1:" + port);
  }

  /** The port the operator must serve its metrics on. */
  int operatorPort() {
    return operatorPort;
  }

  /** Instant and range queries answered so far, from Prometheus' own request counter. */
  double queriesServed() throws IOException, InterruptedException {
    double total = 0;
    for (String line : ScaleBench.get(uri().resolve("/metrics")).split("\n")) {
      if (line.startsWith("prometheus_http_requests_total{")
          && (line.contains("handler=\"/api/v1/query\"")
              || line.contains("handler=\"/api/v1/query_range\""))) {
        total += Double.parseDouble(line.substring(line.lastIndexOf(' ') + 1));
      }
    }
    return total;
  }

  /** The {@code q} quantile of the operator's reconcile time over the last seconds, all pools. */
  double reconcileQuantile(double q, int seconds) throws IOException, InterruptedException {
    String promql =
        "histogram_quantile("
            + q
            + ", sum by (le) (increase(heapherd_reconcile_duration_seconds_bucket["
            + seconds
            + "s])))";
    var result =
        new ObjectMapper()
            .readTree(
                ScaleBench.get(
                    uri()
                        .resolve(
                            "/api/v1/query?query="
                                + URLEncoder.encode(promql, StandardCharsets.UTF_8))))
            .path("data")
            .path("result");
    return result.isEmpty() ? Double.NaN : result.get(0).path("value").get(1).asDouble();
  }

  @Override
  public void close() throws InterruptedException {
    ScaleBench.stop(process, 30);
  }
}
