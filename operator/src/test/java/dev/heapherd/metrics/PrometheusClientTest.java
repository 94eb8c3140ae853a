package dev.heapherd.metrics;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import com.sun.net.httpserver.HttpExchange;
import com.sun.net.httpserver.HttpServer;
import dev.heapherd.input.Snapshot;
import dev.heapherd.input.SnapshotReader;
import dev.heapherd.input.SnapshotWriter;
import java.io.IOException;
import java.io.OutputStream;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.URI;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Optional;
import java.util.concurrent.atomic.AtomicReference;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The client against a stand-in HTTP server for answers the real Prometheus cannot be made to give
 * on demand (HTTP 500, a stall). The real server is used in {@code *IT} tests.
 */
class PrometheusClientTest {

  /** Longer than the client's timeout in these tests. */
  private static final Duration STALL = Duration.ofSeconds(6);

  private static final Duration TIMEOUT = Duration.ofMillis(1500);

  /** Gap between the bytes of a trickling body: its whole body takes far beyond the timeout. */
  private static final Duration TRICKLE = Duration.ofMillis(100);

  private static final String EMPTY_VECTOR =
      "{\"status\":\"success\",\"data\":{\"resultType\":\"vector\",\"result\":[]}}";

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
        "not a Prometheus error (18 bytes)");
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
  void seriesOfAnotherNamespaceAreDroppedAndReported() throws Exception {
    // Every query answers with a pod of namespace "other", as a query without the pool's
    // selector would: it must not be measured as the pool's workload "orders".
    String otherPod =
        "{\"status\":\"success\",\"data\":{\"resultType\":\"vector\",\"result\":["
            + "{\"metric\":{\"namespace\":\"other\",\"pod\":\"orders-7d4b9c6f5-x2x9q\","
            + "\"collector\":\"G1 Young Generation\"},\"value\":[1,\"100\"]}]}}";
    PrometheusClient client = serveWith(exchange -> respond(exchange, 200, otherPod));
    server.createContext(
        "/api/v1/query_range",
        exchange ->
            respond(
                exchange,
                200,
                "{\"status\":\"success\",\"data\":{\"resultType\":\"matrix\",\"result\":[]}}"));
    Snapshot snapshot =
        new SnapshotBuilder(new FleetReader(client, QueryProfiles.MICROMETER))
            .build("shop", 60, Instant.now(), List.of("orders"));
    assertThat(snapshot.workloads()).isEmpty();
    assertThat(snapshot.held())
        .anySatisfy(
            h -> {
              assertThat(h.name()).isEqualTo("orders-7d4b9c6f5-x2x9q");
              assertThat(h.reason()).contains("pod of namespace \"other\" answered a query for");
            });
  }

  @Test
  void aSnapshotOfOddSeriesIsOneItsOwnReaderAccepts(@TempDir Path dir) throws Exception {
    // One pod name in two foreign namespaces, and a series with an empty pod label: held once
    // each by a name a workload can have, so the written snapshot reads back.
    String odd =
        "{\"status\":\"success\",\"data\":{\"resultType\":\"vector\",\"result\":["
            + "{\"metric\":{\"namespace\":\"other\",\"pod\":\"orders-7d4b9c6f5-x2x9q\"},"
            + "\"value\":[1,\"100\"]},"
            + "{\"metric\":{\"namespace\":\"third\",\"pod\":\"orders-7d4b9c6f5-x2x9q\"},"
            + "\"value\":[1,\"100\"]},"
            + "{\"metric\":{\"namespace\":\"shop\",\"pod\":\"\"},\"value\":[1,\"100\"]}]}}";
    PrometheusClient client = serveWith(exchange -> respond(exchange, 200, odd));
    server.createContext(
        "/api/v1/query_range",
        exchange ->
            respond(
                exchange,
                200,
                "{\"status\":\"success\",\"data\":{\"resultType\":\"matrix\",\"result\":[]}}"));
    Snapshot snapshot =
        new SnapshotBuilder(new FleetReader(client, QueryProfiles.MICROMETER))
            .build("shop", 60, Instant.now(), List.of("orders"));
    Path file =
        Files.writeString(dir.resolve("snapshot.yaml"), SnapshotWriter.write(snapshot, "test"));
    Snapshot read = SnapshotReader.read(file);
    assertThat(read.held())
        .extracting(Snapshot.Held::name)
        .containsExactlyInAnyOrder("orders-7d4b9c6f5-x2x9q", "orders");
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

  @Test
  void aBodyThatTricklesIsCutOffAtTheTimeoutAndTheClientStillWorks() throws Exception {
    AtomicReference<Boolean> trickle = new AtomicReference<>(true);
    PrometheusClient client =
        serveWith(
            exchange -> {
              if (!trickle.get()) {
                respond(exchange, 200, EMPTY_VECTOR);
                return;
              }
              exchange.sendResponseHeaders(200, 0);
              try (OutputStream out = exchange.getResponseBody()) {
                for (int i = 0; i < STALL.toMillis() / TRICKLE.toMillis(); i++) {
                  out.write('{');
                  out.flush();
                  sleep(TRICKLE);
                }
              } catch (IOException e) {
                // The client hung up, as it should.
              }
            });
    long start = System.nanoTime();
    expect(client, MetricsException.Kind.TIMEOUT, "did not answer within");
    assertThat(Duration.ofNanos(System.nanoTime() - start)).isLessThan(STALL);
    trickle.set(false);
    assertThat(client.query("up", Instant.now()).samples()).isEmpty();
  }

  @Test
  void aBodyBeyondTheCapIsRefusedWithoutRunningOutOfMemory() throws Exception {
    AtomicReference<Boolean> flood = new AtomicReference<>(true);
    byte[] chunk = new byte[1 << 20];
    java.util.Arrays.fill(chunk, (byte) ' ');
    PrometheusClient client =
        serveWith(
            exchange -> {
              if (!flood.get()) {
                respond(exchange, 200, EMPTY_VECTOR);
                return;
              }
              exchange.sendResponseHeaders(200, 0);
              try (OutputStream out = exchange.getResponseBody()) {
                for (int i = 0; i <= (PrometheusClient.MAX_BODY_BYTES >> 20) + 8; i++) {
                  out.write(chunk);
                }
              } catch (IOException e) {
                // The client hung up after the cap, as it should.
              }
            },
            Duration.ofSeconds(20));
    expect(
        client,
        MetricsException.Kind.BAD_RESPONSE,
        "more than " + (PrometheusClient.MAX_BODY_BYTES >> 20) + " MiB");
    flood.set(false);
    assertThat(client.query("up", Instant.now()).samples()).isEmpty();
  }

  @Test
  void theBodyCapFollowsTheHeapSoTheOperatorsSmallHeapIsNotExhausted() {
    // The chart's -Xmx192m (helm/heapherd/values.yaml) reads at most 6 MiB per answer.
    assertThat(PrometheusClient.bodyCapBytes(192L << 20)).isEqualTo(6 << 20);
    assertThat(PrometheusClient.bodyCapBytes(8L << 30)).isEqualTo(64 << 20);
    assertThat(PrometheusClient.bodyCapBytes(16L << 20)).isEqualTo(1 << 20);
  }

  @Test
  void aRedirectIsNotFollowedSoTheTokenNeverLeavesTheOrigin() throws Exception {
    HttpServer elsewhere =
        HttpServer.create(new InetSocketAddress(InetAddress.getLoopbackAddress(), 0), 0);
    AtomicReference<String> leaked = new AtomicReference<>();
    elsewhere.createContext(
        "/",
        exchange -> {
          leaked.set(String.valueOf(exchange.getRequestHeaders().getFirst("Authorization")));
          respond(exchange, 200, EMPTY_VECTOR);
        });
    elsewhere.start();
    try {
      String target = "http://localhost:" + elsewhere.getAddress().getPort() + "/api/v1/query";
      PrometheusClient client =
          serveWith(
              exchange -> {
                exchange.getResponseHeaders().add("Location", target);
                respond(exchange, 307, "");
              });
      expect(client, MetricsException.Kind.REJECTED, "redirect (HTTP 307), which is not followed");
      assertThat(leaked.get()).isNull();
    } finally {
      elsewhere.stop(0);
    }
  }

  @Test
  void anErrorPageThatEchoesTheTokenIsNotQuoted() throws Exception {
    PrometheusClient client =
        serve(401, "<html>denied: Authorization: Bearer s3cret</html>", Duration.ZERO);
    assertThatThrownBy(() -> client.query("up", Instant.now()))
        .isInstanceOf(MetricsException.class)
        .hasMessageContaining("HTTP 401")
        .hasMessageNotContaining("s3cret");
  }

  @Test
  void aPrometheusErrorOrWarningThatEchoesTheTokenShowsItRedacted() throws Exception {
    // Prometheus' own error text is quoted, so a server (or a proxy speaking its format) that
    // echoes the request's headers there must not carry the token into messages and status.
    PrometheusClient refusing =
        serve(
            400,
            "{\"status\":\"error\",\"errorType\":\"bad_data\","
                + "\"error\":\"bad header Authorization: Bearer s3cret\"}",
            Duration.ZERO);
    assertThatThrownBy(() -> refusing.query("up", Instant.now()))
        .hasMessageContaining("Bearer (token)")
        .hasMessageNotContaining("s3cret");
    server.stop(0);
    PrometheusClient warning =
        serve(
            200,
            "{\"status\":\"success\",\"warnings\":[\"sent Bearer s3cret\\nupstream\"],"
                + "\"data\":{\"resultType\":\"vector\",\"result\":[]}}",
            Duration.ZERO);
    assertThat(warning.query("up", Instant.now()).warnings())
        .containsExactly("sent Bearer (token) upstream");
  }

  private PrometheusClient serveWith(com.sun.net.httpserver.HttpHandler handler)
      throws IOException, MetricsException {
    return serveWith(handler, TIMEOUT);
  }

  private PrometheusClient serveWith(com.sun.net.httpserver.HttpHandler handler, Duration timeout)
      throws IOException, MetricsException {
    server = HttpServer.create(new InetSocketAddress(InetAddress.getLoopbackAddress(), 0), 0);
    server.setExecutor(java.util.concurrent.Executors.newCachedThreadPool());
    server.createContext("/api/v1/query", handler);
    server.start();
    URI uri = URI.create("http://127.0.0.1:" + server.getAddress().getPort());
    return PrometheusClient.connect(
        new PrometheusEndpoint(uri, Optional.of("s3cret"), Optional.empty(), timeout));
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
