package dev.heapherd.cli;

import static org.assertj.core.api.Assertions.assertThat;

import io.micrometer.core.instrument.Counter;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.net.InetSocketAddress;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.util.Map;
import java.util.Optional;
import java.util.concurrent.atomic.AtomicBoolean;
import org.junit.jupiter.api.Test;

/** The operator's metrics and health endpoints, served on loopback. */
class HealthServerTest {

  private final HttpClient http = HttpClient.newHttpClient();

  @Test
  void servesMetricsInPrometheusTextAndHealth() throws Exception {
    PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
    Counter.builder("heapherd.rollout.steps").tag("step", "started").register(registry).increment();
    AtomicBoolean ready = new AtomicBoolean(false);
    try (HealthServer server =
        HealthServer.start(new InetSocketAddress("127.0.0.1", 0), registry, ready::get)) {
      String base = "http://127.0.0.1:" + server.port();

      var metrics = get(base + "/metrics");
      assertThat(metrics.statusCode()).isEqualTo(200);
      // Micrometer's Prometheus naming: dots become underscores, counters end in _total.
      assertThat(metrics.body()).contains("heapherd_rollout_steps_total{step=\"started\"} 1.0");
      assertThat(metrics.headers().firstValue("Content-Type"))
          .hasValueSatisfying(t -> assertThat(t).startsWith("text/plain"));

      assertThat(get(base + "/healthz").statusCode()).isEqualTo(200);
      assertThat(get(base + "/readyz").statusCode()).isEqualTo(503);
      ready.set(true);
      assertThat(get(base + "/readyz").statusCode()).isEqualTo(200);
    }
  }

  @Test
  void servesEachPoolsReviewPageReadOnly() throws Exception {
    PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
    Map<String, String> pages = Map.of("/pools/shop/checkout", "<!DOCTYPE html><p>checkout</p>");
    try (HealthServer server =
        HealthServer.start(
            new InetSocketAddress("127.0.0.1", 0),
            registry,
            () -> true,
            path -> Optional.ofNullable(pages.get(path)))) {
      String base = "http://127.0.0.1:" + server.port();

      var page = get(base + "/pools/shop/checkout");
      assertThat(page.statusCode()).isEqualTo(200);
      assertThat(page.body()).contains("checkout");
      assertThat(page.headers().firstValue("Content-Type"))
          .hasValueSatisfying(t -> assertThat(t).startsWith("text/html"));
      assertThat(get(base + "/pools/shop/other").statusCode()).isEqualTo(404);
      var post =
          http.send(
              HttpRequest.newBuilder(URI.create(base + "/pools/shop/checkout"))
                  .POST(HttpRequest.BodyPublishers.ofString("x"))
                  .build(),
              HttpResponse.BodyHandlers.ofString());
      assertThat(post.statusCode()).as("read-only").isEqualTo(404);
    }
  }

  private HttpResponse<String> get(String url) throws Exception {
    return http.send(
        HttpRequest.newBuilder(URI.create(url)).build(), HttpResponse.BodyHandlers.ofString());
  }
}
