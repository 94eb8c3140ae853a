package dev.heapherd.metrics;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import com.sun.net.httpserver.HttpExchange;
import com.sun.net.httpserver.HttpServer;
import dev.heapherd.input.Snapshot;
import java.io.IOException;
import java.io.OutputStream;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.URI;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Optional;
import java.util.concurrent.atomic.AtomicReference;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.Test;

/**
 * The client against a stand-in HTTP server for answers the real Prometheus cannot be made to give
 * on demand (HTTP 500, a stall). The real server is used in {@code *IT} tests.
 */
class PrometheusClientTest {

  /** Longer than the client's timeout in these tests. */
  private static final Duration STALL = Duration.ofSeconds(3);

  private static final Duration TIMEOUT = Duration.ofMillis(500);

  private HttpServer server;
  private final AtomicReference<String> lastAuthorization = new AtomicReference<>();

  private PrometheusClient serve(int status, String body, Duration delay) throws Exception {
    server = HttpServer.create(new InetSocketAddress(InetAddress.getLoopbackAddress(), 0), 0);
    server.createContext(
        "/api/v1/query",
        exchange -> {
          lastAuthorization.set(exchange.getRequestHeaders().getFirst("Authorization"));
          sleep(delay);
          respond(exchange, status, body);
        });
    server.start();
    URI uri = URI.create("http://127.0.0.1:" + server.getAddress().getPort());
    return PrometheusClient.connect(
        new PrometheusEndpoint(uri, Optional.of("s3cret"), Optional.empty(), TIMEOUT));
  }

  @AfterEach
  void stop() {
    if (server != null) {
      server.stop(0);
    }
  }

  @Test
  void parsesVectorsIncludingNanAndInfinitiesAndSendsTheToken() throws Exception {
    PrometheusClient client =
        serve(
            200,
            "{\"status\":\"success\",\"warnings\":[\"partial\"],\"data\":{\"resultType\":\"vector\",\"result\":["
                + "{\"metric\":{\"pod\":\"a-0\"},\"value\":[1,\"1.5\"]},"
                + "{\"metric\":{\"pod\":\"b-0\"},\"value\":[1,\"NaN\"]},"
                + "{\"metric\":{\"pod\":\"c-0\"},\"value\":[1,\"+Inf\"]}]}}",
            Duration.ZERO);
    QueryResult result = client.query("up", Instant.now());
    assertThat(result.samples())
        .extracting(s -> s.label("pod"))
        .containsExactly("a-0", "b-0", "c-0");
    assertThat(result.samples().get(0).value()).isEqualTo(1.5);
    assertThat(result.samples().get(1).value()).isNaN();
    assertThat(result.samples().get(2).value()).isEqualTo(Double.POSITIVE_INFINITY);
    assertThat(result.warnings()).containsExactly("partial");
    assertThat(lastAuthorization.get()).isEqualTo("Bearer s3cret");
  }

  @Test
  void serverErrorsTimeoutsRejectionsAndGarbageHaveKindsAndOneLineMessages() throws Exception {
    expect(serve(500, "boom", Duration.ZERO), MetricsException.Kind.SERVER_ERROR, "HTTP 500");
    stop();
    expect(
        serve(
            400,
            "{\"status\":\"error\",\"errorType\":\"bad_data\",\"error\":\"parse error\"}",
            Duration.ZERO),
        MetricsException.Kind.REJECTED,
        "parse error");
    stop();
    expect(
        serve(200, "<html>proxy</html>", Duration.ZERO),
        MetricsException.Kind.BAD_RESPONSE,
        "proxy");
    stop();
    expect(serve(200, "{}", STALL), MetricsException.Kind.TIMEOUT, "did not answer");
  }

  @Test
  void unreachableServerHoldsEveryExpectedWorkload() throws Exception {
    PrometheusClient client = serve(200, "{}", Duration.ZERO);
    stop();
    server = null;
    Snapshot snapshot =
        new SnapshotBuilder(new FleetReader(client, QueryProfiles.MICROMETER))
            .build("shop", 60, Instant.now(), List.of("orders", "search"));
    assertThat(snapshot.workloads()).isEmpty();
    assertThat(snapshot.held()).extracting(Snapshot.Held::name).containsExactly("orders", "search");
    assertThat(snapshot.held()).allMatch(h -> h.reason().contains("cannot connect"));
  }

  @Test
  void partialDataHoldsEveryExpectedWorkload() throws Exception {
    PrometheusClient client =
        serve(
            200,
            "{\"status\":\"success\",\"warnings\":[\"store eu-1 unreachable\"],"
                + "\"data\":{\"resultType\":\"vector\",\"result\":[]}}",
            Duration.ZERO);
    Snapshot snapshot =
        new SnapshotBuilder(new FleetReader(client, QueryProfiles.MICROMETER))
            .build("shop", 60, Instant.now(), List.of("orders"));
    assertThat(snapshot.workloads()).isEmpty();
    assertThat(snapshot.held())
        .singleElement()
        .satisfies(h -> assertThat(h.reason()).contains("partial data").contains("eu-1"));
  }

  private static void expect(PrometheusClient client, MetricsException.Kind kind, String text) {
    assertThatThrownBy(() -> client.query("up", Instant.now()))
        .isInstanceOfSatisfying(MetricsException.class, e -> assertThat(e.kind()).isEqualTo(kind))
        .hasMessageContaining(text)
        .hasMessageNotContaining("\n");
  }

  private static void respond(HttpExchange exchange, int status, String body) throws IOException {
    byte[] bytes = body.getBytes(StandardCharsets.UTF_8);
    exchange.sendResponseHeaders(status, bytes.length);
    try (OutputStream out = exchange.getResponseBody()) {
      out.write(bytes);
    }
  }

  private static void sleep(Duration delay) {
    try {
      Thread.sleep(delay.toMillis());
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
  }
}
