package dev.heapherd.harness;

import static org.awaitility.Awaitility.await;

import java.io.IOException;
import java.net.ServerSocket;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;

/**
 * The real Prometheus server (Debian's package) on loopback, scraping every second the targets a
 * test lists. Started and stopped by the test, by its own process handle.
 */
public final class PrometheusServer implements AutoCloseable {

  /** Where Debian's package installs the server. */
  public static final Path BINARY = Path.of("/usr/bin/prometheus");

  /** One scrape a second: windows of tens of seconds then hold enough samples. */
  public static final int SCRAPE_INTERVAL_SECONDS = 1;

  /** How long the server gets to start or stop. */
  private static final Duration STARTUP = Duration.ofSeconds(60);

  private final Path dir;
  private final Path targets;
  private final int port;
  private Process process;

  /** A target to scrape and the labels it carries, such as namespace and pod. */
  public record Target(String hostPort, Map<String, String> labels) {}

  private PrometheusServer(Path dir, Path targets, int port) {
    this.dir = dir;
    this.targets = targets;
    this.port = port;
  }

  /** Starts a server with no targets yet, storing its data under {@code dir}. */
  public static PrometheusServer start(Path dir) throws IOException {
    Files.createDirectories(dir);
    PrometheusServer server = new PrometheusServer(dir, dir.resolve("targets.json"), freePort());
    server.setTargets(List.of());
    server.launch();
    return server;
  }

  /** Starts a server scraping the file_sd list another process (the node agent) writes. */
  public static PrometheusServer scraping(Path dir, Path targetsFile) throws IOException {
    Files.createDirectories(dir);
    PrometheusServer server = new PrometheusServer(dir, targetsFile, freePort());
    server.launch();
    return server;
  }

  /** The server's base URL on 127.0.0.1. */
  public URI uri() {
    return URI.create("http://127.0.0.1:" + port);
  }

  /** Replaces the scraped targets; Prometheus rereads the file within a second. */
  public void setTargets(List<Target> list) throws IOException {
    StringBuilder json = new StringBuilder("[");
    for (int i = 0; i < list.size(); i++) {
      Target t = list.get(i);
      json.append(i == 0 ? "" : ",")
          .append("{\"targets\":[\"")
          .append(t.hostPort())
          .append("\"],\"labels\":{");
      List<String> labels = new ArrayList<>();
      t.labels().forEach((k, v) -> labels.add("\"" + k + "\":\"" + v + "\""));
      json.append(String.join(",", labels)).append("}}");
    }
    Path tmp = dir.resolve("targets.json.tmp");
    Files.writeString(tmp, json.append("]").toString());
    Files.move(tmp, targets, java.nio.file.StandardCopyOption.ATOMIC_MOVE);
  }

  /** The value of an instant query that yields one number; 0 when it yields none. */
  public double scalar(String promql) throws IOException, InterruptedException {
    HttpResponse<String> response =
        HttpClient.newHttpClient()
            .send(
                HttpRequest.newBuilder(
                        uri()
                            .resolve(
                                "/api/v1/query?query="
                                    + java.net.URLEncoder.encode(
                                        promql, java.nio.charset.StandardCharsets.UTF_8)))
                    .timeout(Duration.ofSeconds(5))
                    .build(),
                HttpResponse.BodyHandlers.ofString());
    var result =
        new com.fasterxml.jackson.databind.ObjectMapper()
            .readTree(response.body())
            .path("data")
            .path("result");
    return result.isEmpty() ? 0 : result.get(0).path("value").get(1).asDouble();
  }

  /** Starts the process again after {@link #stop()}, on the same port and data. */
  public void launch() throws IOException {
    Path config = dir.resolve("prometheus.yml");
    Files.writeString(
        config,
        String.join(
            "\n",
            "global:",
            "  scrape_interval: " + SCRAPE_INTERVAL_SECONDS + "s",
            "  scrape_timeout: " + SCRAPE_INTERVAL_SECONDS + "s",
            "  evaluation_interval: " + SCRAPE_INTERVAL_SECONDS + "s",
            "scrape_configs:",
            "  - job_name: jvm",
            "    file_sd_configs:",
            "      - files: ['" + targets + "']",
            "        refresh_interval: 1s",
            ""));
    process =
        new ProcessBuilder(
                BINARY.toString(),
                "--config.file=" + config,
                "--storage.tsdb.path=" + dir.resolve("data"),
                "--web.listen-address=127.0.0.1:" + port,
                "--log.level=warn")
            .redirectErrorStream(true)
            .redirectOutput(dir.resolve("prometheus.log").toFile())
            .start();
    HttpClient http = HttpClient.newHttpClient();
    await()
        .atMost(STARTUP)
        .pollInterval(Duration.ofMillis(200))
        .ignoreExceptions()
        .until(
            () ->
                http.send(
                            HttpRequest.newBuilder(uri().resolve("/-/ready")).build(),
                            HttpResponse.BodyHandlers.discarding())
                        .statusCode()
                    == 200);
  }

  /** Stops the process by its handle and waits for it to exit. */
  public void stop() throws InterruptedException {
    if (process == null) {
      return;
    }
    process.destroy();
    if (!process.waitFor(STARTUP.toSeconds(), TimeUnit.SECONDS)) {
      process.destroyForcibly().waitFor();
    }
    process = null;
  }

  @Override
  public void close() {
    try {
      stop();
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
  }

  /** A loopback port free at the time of asking. */
  public static int freePort() throws IOException {
    try (ServerSocket socket = new ServerSocket(0, 1, java.net.InetAddress.getLoopbackAddress())) {
      return socket.getLocalPort();
    }
  }
}
