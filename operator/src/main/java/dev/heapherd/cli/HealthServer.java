package dev.heapherd.cli;

import com.sun.net.httpserver.HttpExchange;
import com.sun.net.httpserver.HttpServer;
import dev.heapherd.reconcile.OperatorRuntime;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.IOException;
import java.io.OutputStream;
import java.net.InetSocketAddress;
import java.nio.charset.StandardCharsets;
import java.util.Optional;
import java.util.function.BooleanSupplier;
import java.util.function.Function;

/**
 * Serves the operator's own metrics, health and review pages on one port: /metrics, /healthz,
 * /readyz, /pools/NAMESPACE/NAME.
 */
final class HealthServer implements AutoCloseable {

  private static final int OK = 200;
  private static final int UNAVAILABLE = 503;
  private static final int NOT_FOUND = 404;

  private static final String HTML = "text/html; charset=utf-8";

  /** The Prometheus text exposition format, version 0.0.4 (Prometheus documentation). */
  private static final String PROMETHEUS_TEXT = "text/plain; version=0.0.4; charset=utf-8";

  private final HttpServer server;

  private HealthServer(HttpServer server) {
    this.server = server;
  }

  /**
   * Starts serving on {@code address}.
   *
   * @param ready whether the operator reconciles: informers connected, leader or standby
   */
  static HealthServer start(
      InetSocketAddress address, PrometheusMeterRegistry registry, BooleanSupplier ready)
      throws IOException {
    return start(address, registry, ready, path -> Optional.empty());
  }

  /**
   * Starts serving on {@code address}, with each pool's review page (read-only, GET only) under
   * {@link OperatorRuntime#reviewPagesPrefix()}.
   *
   * @param pages the page at a request path, if a pool has one there
   */
  static HealthServer start(
      InetSocketAddress address,
      PrometheusMeterRegistry registry,
      BooleanSupplier ready,
      Function<String, Optional<String>> pages)
      throws IOException {
    HttpServer server = HttpServer.create(address, 0);
    server.createContext(
        OperatorRuntime.reviewPagesPrefix(),
        exchange -> {
          Optional<String> page =
              "GET".equals(exchange.getRequestMethod())
                  ? pages.apply(exchange.getRequestURI().getPath())
                  : Optional.empty();
          if (page.isPresent()) {
            reply(exchange, OK, HTML, page.get());
          } else {
            reply(exchange, NOT_FOUND, "text/plain", "no such pool page\n");
          }
        });
    server.createContext(
        "/metrics", exchange -> reply(exchange, OK, PROMETHEUS_TEXT, registry.scrape()));
    server.createContext("/healthz", exchange -> reply(exchange, OK, "text/plain", "ok\n"));
    server.createContext(
        "/readyz",
        exchange ->
            reply(
                exchange,
                ready.getAsBoolean() ? OK : UNAVAILABLE,
                "text/plain",
                ready.getAsBoolean() ? "ready\n" : "not ready\n"));
    server.start();
    return new HealthServer(server);
  }

  /** The port actually bound (useful when 0 was asked for). */
  int port() {
    return server.getAddress().getPort();
  }

  private static void reply(HttpExchange exchange, int code, String type, String body)
      throws IOException {
    byte[] bytes = body.getBytes(StandardCharsets.UTF_8);
    exchange.getResponseHeaders().set("Content-Type", type);
    exchange.sendResponseHeaders(code, bytes.length);
    try (OutputStream out = exchange.getResponseBody()) {
      out.write(bytes);
    }
  }

  @Override
  public void close() {
    server.stop(0);
  }
}
