package dev.heapherd.cli;

import com.sun.net.httpserver.HttpExchange;
import com.sun.net.httpserver.HttpServer;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.IOException;
import java.io.OutputStream;
import java.net.InetSocketAddress;
import java.nio.charset.StandardCharsets;
import java.util.function.BooleanSupplier;

/** Serves the operator's own metrics and health on one port: /metrics, /healthz, /readyz. */
final class HealthServer implements AutoCloseable {

  private static final int OK = 200;
  private static final int UNAVAILABLE = 503;

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
    HttpServer server = HttpServer.create(address, 0);
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
