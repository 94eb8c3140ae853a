package dev.heapherd.scale;

import com.sun.net.httpserver.HttpExchange;
import com.sun.net.httpserver.HttpServer;
import java.io.IOException;
import java.io.OutputStream;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.nio.charset.StandardCharsets;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;

/**
 * Serves, for every pod of the bench, the JVM series a Micrometer-instrumented G1 service exports,
 * at {@code /metrics/<namespace>/<pod>}: one scrape target per pod, as Prometheus' Kubernetes
 * discovery would give, so Prometheus labels each with its namespace and pod. Counters grow at the
 * pod's rates from the moment it was first scraped and never reset.
 */
final class SyntheticExporter implements AutoCloseable {

  /** Threads answering scrapes: a few, for Prometheus' concurrent scrapes of many targets. */
  private static final int THREADS = 4;

  /** Seconds between the synthetic old-generation cycles; a quiet service's pace, our choice. */
  private static final double OLD_CYCLE_SECONDS = 60;

  /** Young collections per second, a typical pace for a busy service (common practice). */
  private static final double YOUNG_COLLECTIONS_PER_SECOND = 2;

  /** Committed non-heap (metaspace, code cache) and direct buffers of a mid-size service. */
  private static final long METASPACE_BYTES = 80L << 20;

  private static final long CODE_CACHE_BYTES = 24L << 20;
  private static final long DIRECT_BYTES = 8L << 20;

  /** Below 2^53 a double holds every whole number exactly (IEEE 754). */
  private static final double WHOLE_LIMIT = 0x1p53;

  /** One pod's figures: its heap limit and the per-second rates its counters grow at. */
  record FakePod(
      String namespace,
      String pod,
      long heapMaxBytes,
      long liveBytes,
      double youngGcSecondsPerSecond,
      double oldGcSecondsPerSecond,
      double promotionBytesPerSecond,
      double allocationBytesPerSecond) {}

  private final HttpServer server;
  private final ExecutorService executor;
  private final Map<String, FakePod> pods;
  private final Map<String, Long> firstScrapeNanos = new ConcurrentHashMap<>();

  private SyntheticExporter(
      HttpServer server, ExecutorService executor, Map<String, FakePod> pods) {
    this.server = server;
    this.executor = executor;
    this.pods = pods;
  }

  /** Serves {@code pods} on 127.0.0.1 at any free port. */
  static SyntheticExporter start(Iterable<FakePod> pods) throws IOException {
    Map<String, FakePod> byPath = new ConcurrentHashMap<>();
    for (FakePod p : pods) {
      byPath.put(path(p), p);
    }
    HttpServer server =
        HttpServer.create(new InetSocketAddress(InetAddress.getLoopbackAddress(), 0), 0);
    ExecutorService executor = Executors.newFixedThreadPool(THREADS);
    server.setExecutor(executor);
    SyntheticExporter exporter = new SyntheticExporter(server, executor, byPath);
    server.createContext("/metrics/", exporter::answer);
    server.start();
    return exporter;
  }

  /** The scrape path of {@code pod}. */
  static String path(FakePod pod) {
    return "/metrics/" + pod.namespace() + "/" + pod.pod();
  }

  /** The port served on. */
  int port() {
    return server.getAddress().getPort();
  }

  private void answer(HttpExchange exchange) throws IOException {
    FakePod pod = pods.get(exchange.getRequestURI().getPath());
    if (pod == null) {
      exchange.sendResponseHeaders(404, -1);
      exchange.close();
      return;
    }
    long now = System.nanoTime();
    double t = (now - firstScrapeNanos.computeIfAbsent(pod.pod(), k -> now)) / 1e9;
    byte[] body = series(pod, t).getBytes(StandardCharsets.UTF_8);
    exchange.getResponseHeaders().set("Content-Type", "text/plain; version=0.0.4");
    exchange.sendResponseHeaders(200, body.length);
    try (OutputStream out = exchange.getResponseBody()) {
      out.write(body);
    }
  }

  /** The exposition of {@code pod}, {@code t} seconds after its first scrape. */
  static String series(FakePod pod, double t) {
    long h = pod.heapMaxBytes();
    long live = pod.liveBytes();
    double cycle = (t % OLD_CYCLE_SECONDS) / OLD_CYCLE_SECONDS;
    long oldCycles = 1 + (long) (t / OLD_CYCLE_SECONDS);
    long youngCollections = 1 + (long) (t * YOUNG_COLLECTIONS_PER_SECOND);
    // The old generation fills between cycles with what is promoted, then falls back to live.
    long oldUsed = live + (long) (pod.promotionBytesPerSecond() * OLD_CYCLE_SECONDS * cycle);
    long edenCommitted = (long) (h * 0.3);
    long survivorCommitted = (long) (h * 0.02);
    long edenUsed = (long) (edenCommitted * ((t * YOUNG_COLLECTIONS_PER_SECOND) % 1));
    StringBuilder out = new StringBuilder(2048);
    gauge(out, "jvm_memory_max_bytes", "area=\"heap\",id=\"G1 Old Gen\"", h);
    gauge(out, "jvm_memory_max_bytes", "area=\"heap\",id=\"G1 Eden Space\"", -1);
    gauge(out, "jvm_memory_max_bytes", "area=\"heap\",id=\"G1 Survivor Space\"", -1);
    gauge(out, "jvm_memory_used_bytes", "area=\"heap\",id=\"G1 Old Gen\"", oldUsed);
    gauge(out, "jvm_memory_used_bytes", "area=\"heap\",id=\"G1 Eden Space\"", edenUsed);
    gauge(
        out, "jvm_memory_used_bytes", "area=\"heap\",id=\"G1 Survivor Space\"", survivorCommitted);
    gauge(out, "jvm_memory_committed_bytes", "area=\"heap\",id=\"G1 Old Gen\"", h - edenCommitted);
    gauge(out, "jvm_memory_committed_bytes", "area=\"heap\",id=\"G1 Eden Space\"", edenCommitted);
    gauge(
        out,
        "jvm_memory_committed_bytes",
        "area=\"heap\",id=\"G1 Survivor Space\"",
        survivorCommitted);
    gauge(out, "jvm_memory_committed_bytes", "area=\"nonheap\",id=\"Metaspace\"", METASPACE_BYTES);
    gauge(
        out,
        "jvm_memory_committed_bytes",
        "area=\"nonheap\",id=\"CodeHeap 'non-profiled nmethods'\"",
        CODE_CACHE_BYTES);
    gauge(out, "jvm_buffer_memory_used_bytes", "id=\"direct\"", DIRECT_BYTES);
    gauge(out, "jvm_gc_live_data_size_bytes", "", live);
    String young =
        "action=\"end of minor GC\",cause=\"G1 Evacuation Pause\",gc=\"G1 Young Generation\"";
    gauge(out, "jvm_gc_pause_seconds_count", young, youngCollections);
    gauge(out, "jvm_gc_pause_seconds_sum", young, pod.youngGcSecondsPerSecond() * t);
    String old =
        "action=\"end of major GC\",cause=\"G1 Compaction Pause\",gc=\"G1 Old Generation\"";
    gauge(out, "jvm_gc_pause_seconds_count", old, oldCycles);
    gauge(out, "jvm_gc_pause_seconds_sum", old, pod.oldGcSecondsPerSecond() * t);
    gauge(out, "jvm_gc_memory_promoted_bytes_total", "", pod.promotionBytesPerSecond() * t);
    gauge(out, "jvm_gc_memory_allocated_bytes_total", "", pod.allocationBytesPerSecond() * t);
    return out.toString();
  }

  private static void gauge(StringBuilder out, String name, String labels, double value) {
    out.append(name);
    if (!labels.isEmpty()) {
      out.append('{').append(labels).append('}');
    }
    // Whole numbers as such, the rest with every digit: rates come from differences of these.
    String text =
        value == Math.rint(value) && Math.abs(value) < WHOLE_LIMIT
            ? Long.toString((long) value)
            : Double.toString(value);
    out.append(' ').append(text).append('\n');
  }

  @Override
  public void close() {
    server.stop(0);
    executor.shutdownNow();
  }
}
