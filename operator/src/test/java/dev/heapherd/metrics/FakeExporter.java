package dev.heapherd.metrics;

import com.sun.net.httpserver.HttpServer;
import java.io.IOException;
import java.io.OutputStream;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.nio.charset.StandardCharsets;
import java.util.Locale;

/**
 * A scrape target that speaks Micrometer's metric names with values a test sets, so the real
 * Prometheus can be fed exact rates, NaN, or a counter reset. Counters grow with wall time at the
 * configured rates.
 */
final class FakeExporter implements AutoCloseable {

  /** What the exporter reports; rates are per second. */
  record Values(
      double liveBytes,
      double heapMaxBytes,
      double nonHeapBytes,
      double youngGcSecondsPerSecond,
      double oldGcSecondsPerSecond,
      double promotionBytesPerSecond,
      double allocationBytesPerSecond) {}

  private final HttpServer server;
  private volatile Values values;
  private volatile double liveGrowthBytesPerSecond;
  private volatile long startNanos = System.nanoTime();

  private FakeExporter(Values values) throws IOException {
    this.values = values;
    server = HttpServer.create(new InetSocketAddress(InetAddress.getLoopbackAddress(), 0), 0);
    server.createContext(
        "/metrics",
        exchange -> {
          byte[] body = text().getBytes(StandardCharsets.UTF_8);
          exchange.getResponseHeaders().add("Content-Type", "text/plain; version=0.0.4");
          exchange.sendResponseHeaders(200, body.length);
          try (OutputStream out = exchange.getResponseBody()) {
            out.write(body);
          }
        });
    server.start();
  }

  static FakeExporter start(Values values) throws IOException {
    return new FakeExporter(values);
  }

  String hostPort() {
    return "127.0.0.1:" + server.getAddress().getPort();
  }

  void set(Values next) {
    values = next;
  }

  /** Makes the live figure grow with time, as a warming cache or a leak would. */
  void growLive(double bytesPerSecond) {
    liveGrowthBytesPerSecond = bytesPerSecond;
  }

  /** Starts the counters from zero again, as a restarted JVM would. */
  void restart() {
    startNanos = System.nanoTime();
  }

  private String text() {
    Values v = values;
    double seconds = (System.nanoTime() - startNanos) / 1e9;
    String young =
        "action=\"end of minor GC\",cause=\"G1 Evacuation Pause\",gc=\"G1 Young Generation\"";
    String old =
        "action=\"end of major GC\",cause=\"G1 Compaction Pause\",gc=\"G1 Old Generation\"";
    return String.join(
        "\n",
        line("jvm_gc_pause_seconds_count{" + young + "}", seconds),
        line("jvm_gc_pause_seconds_sum{" + young + "}", v.youngGcSecondsPerSecond() * seconds),
        line("jvm_gc_pause_seconds_count{" + old + "}", seconds / 10),
        line("jvm_gc_pause_seconds_sum{" + old + "}", v.oldGcSecondsPerSecond() * seconds),
        line("jvm_gc_live_data_size_bytes", v.liveBytes() + liveGrowthBytesPerSecond * seconds),
        line("jvm_memory_max_bytes{area=\"heap\",id=\"G1 Old Gen\"}", v.heapMaxBytes()),
        line("jvm_memory_max_bytes{area=\"heap\",id=\"G1 Eden Space\"}", -1),
        line("jvm_memory_committed_bytes{area=\"nonheap\",id=\"Metaspace\"}", v.nonHeapBytes()),
        line("jvm_gc_memory_promoted_bytes_total", v.promotionBytesPerSecond() * seconds),
        line("jvm_gc_memory_allocated_bytes_total", v.allocationBytesPerSecond() * seconds),
        "");
  }

  private static String line(String series, double value) {
    String text =
        Double.isNaN(value)
            ? "NaN"
            : Double.isInfinite(value)
                ? (value > 0 ? "+Inf" : "-Inf")
                : String.format(Locale.ROOT, "%.6f", value);
    return series + " " + text;
  }

  @Override
  public void close() {
    server.stop(0);
  }
}
