package dev.heapherd.lab;

import com.sun.net.httpserver.HttpExchange;
import com.sun.net.httpserver.HttpServer;
import java.io.IOException;
import java.io.OutputStream;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.nio.charset.StandardCharsets;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.function.BooleanSupplier;
import java.util.function.Supplier;

/** A service's HTTP endpoints on 127.0.0.1: /metrics (Prometheus text) and /healthz. */
final class LabHttpServer implements AutoCloseable {

  /** Two threads: a scrape and a health check can overlap without queueing. */
  static final int HANDLER_THREADS = 2;

  /** Let the operating system pick the accept backlog. */
  static final int DEFAULT_BACKLOG = 0;

  /** Seconds granted to requests in flight when the server stops. */
  static final int STOP_GRACE_SECONDS = 1;

  static final int HTTP_OK = 200;
  static final int HTTP_SERVICE_UNAVAILABLE = 503;

  /** The content type of Prometheus' text exposition format 0.0.4. */
  static final String PROMETHEUS_TEXT = "text/plain; version=0.0.4; charset=utf-8";

  private final HttpServer server;
  private final ExecutorService executor;

  LabHttpServer(int port, Supplier<String> metrics, BooleanSupplier ready) throws IOException {
    server =
        HttpServer.create(
            new InetSocketAddress(InetAddress.getLoopbackAddress(), port), DEFAULT_BACKLOG);
    executor =
        Executors.newFixedThreadPool(
            HANDLER_THREADS,
            runnable -> {
              Thread thread = new Thread(runnable, "lab-http");
              thread.setDaemon(true);
              return thread;
            });
    server.setExecutor(executor);
    server.createContext(
        "/metrics", exchange -> respond(exchange, HTTP_OK, PROMETHEUS_TEXT, metrics.get()));
    server.createContext(
        "/healthz",
        exchange -> {
          boolean up = ready.getAsBoolean();
          respond(
              exchange,
              up ? HTTP_OK : HTTP_SERVICE_UNAVAILABLE,
              "text/plain; charset=utf-8",
              up ? "ok\n" : "loading\n");
        });
    server.start();
  }

  /** The bound port, which differs from the requested one when that was 0. */
  int port() {
    return server.getAddress().getPort();
  }

  @Override
  public void close() {
    server.stop(STOP_GRACE_SECONDS);
    executor.shutdownNow();
  }

  private static void respond(HttpExchange exchange, int status, String contentType, String body)
      throws IOException {
    try (exchange) {
      byte[] bytes = body.getBytes(StandardCharsets.UTF_8);
      exchange.getResponseHeaders().set("Content-Type", contentType);
      exchange.sendResponseHeaders(status, bytes.length);
      try (OutputStream out = exchange.getResponseBody()) {
        out.write(bytes);
      }
    }
  }
}
