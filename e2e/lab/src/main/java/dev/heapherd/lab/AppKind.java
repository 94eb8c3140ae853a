package dev.heapherd.lab;

import io.micrometer.core.instrument.MeterRegistry;
import java.util.Arrays;
import java.util.Locale;
import java.util.Optional;

/**
 * The five lab services with their default pace and heap. Defaults were calibrated with all five
 * running together on 2 cores: each spends a modest share of a core on its work, and its default
 * heap is about 2.5 times the live set it measures after loading (see README).
 */
public enum AppKind {
  SEARCH(100, 320),
  SQL(300, 384),
  CACHE(3_000, 352),
  GRAPH(100, 256),
  CODEC(1_500, 320);

  private final double defaultOpsPerSecond;
  private final long defaultHeapMiB;

  AppKind(double defaultOpsPerSecond, long defaultHeapMiB) {
    this.defaultOpsPerSecond = defaultOpsPerSecond;
    this.defaultHeapMiB = defaultHeapMiB;
  }

  /** The name used on the command line, in labels and in pod names. */
  public String label() {
    return name().toLowerCase(Locale.ROOT);
  }

  /** Operations per second when none is given. */
  public double defaultOpsPerSecond() {
    return defaultOpsPerSecond;
  }

  /** Heap in MiB the runner gives the service at size scale 1 when none is given. */
  public long defaultHeapMiB() {
    return defaultHeapMiB;
  }

  /** The service of this kind; {@code registry} gets any library metrics it binds. */
  public LabApp create(AppSettings settings, MeterRegistry registry) throws Exception {
    return switch (this) {
      case SEARCH -> new SearchApp(settings);
      case SQL -> new SqlApp(settings);
      case CACHE -> new CacheApp(settings, registry);
      case GRAPH -> new GraphApp(settings);
      case CODEC -> new CodecApp(settings);
    };
  }

  /** The kind named {@code label}, if any. */
  public static Optional<AppKind> of(String label) {
    return Arrays.stream(values()).filter(k -> k.label().equals(label)).findFirst();
  }
}
