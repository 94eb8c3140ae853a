package dev.heapherd.nodeagent;

import static org.awaitility.Awaitility.await;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.net.InetAddress;
import java.net.ServerSocket;
import java.net.URI;
import java.net.URLEncoder;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.concurrent.TimeUnit;

/**
 * The real Prometheus server (Debian's package) on loopback, discovering its targets from the
 * agent's file_sd list. Started and stopped by its own process handle.
 */
final class PrometheusProcess implements AutoCloseable {

  /** Where Debian's package installs the server. */
  static final Path BINARY = Path.of("/usr/bin/prometheus");

  /** How long the server gets to start or stop. */
  private static final Duration STARTUP = Duration.ofSeconds(60);

  private static final ObjectMapper JSON = new ObjectMapper();

  private final Process process;
  private final int port;
  private final HttpClient http = HttpClient.newHttpClient();

  private PrometheusProcess(Process process, int port) {
    this.process = process;
    this.port = port;
  }

  /** Starts a server that scrapes every second whatever {@code fileSd} lists. */
  static PrometheusProcess start(Path dir, Path fileSd) throws IOException {
    Files.createDirectories(dir);
    Path config = dir.resolve("prometheus.yml");
    Files.writeString(
        config,
        String.join(
            "\n",
            "global:",
            "  scrape_interval: 1s",
            "  scrape_timeout: 1s",
            "scrape_configs:",
            "  - job_name: pods",
            "    file_sd_configs:",
            "      - files: ['" + fileSd + "']",
            "        refresh_interval: 1s",
            ""));
    int port;
    try (ServerSocket socket = new ServerSocket(0, 1, InetAddress.getLoopbackAddress())) {
      port = socket.getLocalPort();
    }
    Process process =
        new ProcessBuilder(
                BINARY.toString(),
                "--config.file=" + config,
                "--storage.tsdb.path=" + dir.resolve("data"),
                "--web.listen-address=127.0.0.1:" + port,
                "--log.level=warn")
            .redirectErrorStream(true)
            .redirectOutput(dir.resolve("prometheus.log").toFile())
            .start();
    PrometheusProcess started = new PrometheusProcess(process, port);
    await()
        .atMost(STARTUP)
        .pollInterval(Duration.ofMillis(200))
        .ignoreExceptions()
        .until(() -> started.get("/-/ready").statusCode() == 200);
    return started;
  }

  /** The value of an instant query that yields one number; 0 when it yields none. */
  double scalar(String promql) throws IOException, InterruptedException {
    JsonNode result =
        JSON.readTree(
                get("/api/v1/query?query=" + URLEncoder.encode(promql, StandardCharsets.UTF_8))
                    .body())
            .path("data")
            .path("result");
    return result.isEmpty() ? 0 : result.get(0).path("value").get(1).asDouble();
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
      if (!process.waitFor(STARTUP.toSeconds(), TimeUnit.SECONDS)) {
        process.destroyForcibly().waitFor();
      }
    } catch (InterruptedException e) {
      process.destroyForcibly();
      Thread.currentThread().interrupt();
    }
  }
}
