package dev.heapherd.synthetic;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.sun.net.httpserver.HttpExchange;
import com.sun.net.httpserver.HttpHandler;
import com.sun.net.httpserver.HttpServer;
import java.io.IOException;
import java.io.OutputStream;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.nio.charset.StandardCharsets;
import java.util.Optional;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.function.Supplier;

/** The workload's HTTP endpoints on the loopback address: /metrics, /truth and /ready. */
final class WorkloadServer {

  /** Two threads: a scrape and a test's /truth poll can overlap without queueing. */
  static final int HANDLER_THREADS = 2;

  /** Let the operating system pick the accept backlog. */
  static final int DEFAULT_BACKLOG = 0;

  /** Seconds granted to requests in flight when the server stops. */
  static final int STOP_GRACE_SECONDS = 1;

  static final int HTTP_OK = 200;
  static final int HTTP_NOT_FOUND = 404;
  static final int HTTP_SERVICE_UNAVAILABLE = 503;

  private final HttpServer server;
  private final ExecutorService executor;

  WorkloadServer(
      int port,
      Optional<HttpHandler> metricsHandler,
      Supplier<Truth> truth,
      ReadySignal readySignal)
      throws IOException {
    server =
        HttpServer.create(
            new InetSocketAddress(InetAddress.getLoopbackAddress(), port), DEFAULT_BACKLOG);
    executor =
        Executors.newFixedThreadPool(
            HANDLER_THREADS,
            runnable -> {
              Thread thread = new Thread(runnable, "synthetic-http");
              thread.setDaemon(true);
              return thread;
            });
    server.setExecutor(executor);
    server.createContext(
        "/metrics",
        metricsHandler.orElse(
            exchange ->
                respond(
                    exchange,
                    HTTP_NOT_FOUND,
                    "text/plain",
                    "metrics are served by the OpenTelemetry agent on"
                        + " OTEL_EXPORTER_PROMETHEUS_PORT\n")));
    ObjectMapper json = new ObjectMapper();
    server.createContext(
        "/truth",
        exchange ->
            respond(
                exchange,
                HTTP_OK,
                "application/json",
                json.writeValueAsString(truth.get()) + "\n"));
    server.createContext(
        "/ready",
        exchange -> {
          if (readySignal.isReady()) {
            respond(exchange, HTTP_OK, "text/plain", "ready\n");
          } else {
            respond(exchange, HTTP_SERVICE_UNAVAILABLE, "text/plain", "building live set\n");
          }
        });
  }

  void start() {
    server.start();
  }

  /** The bound port, which differs from the requested one when that was 0. */
  int port() {
    return server.getAddress().getPort();
  }

  void stop() {
    server.stop(STOP_GRACE_SECONDS);
    executor.shutdownNow();
  }

  private static void respond(HttpExchange exchange, int status, String contentType, String body)
      throws IOException {
    try (exchange) {
      byte[] bytes = body.getBytes(StandardCharsets.UTF_8);
      exchange.getResponseHeaders().set("Content-Type", contentType + "; charset=utf-8");
      exchange.sendResponseHeaders(status, bytes.length);
      try (OutputStream out = exchange.getResponseBody()) {
        out.write(bytes);
      }
    }
  }
}
