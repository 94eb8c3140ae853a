package dev.heapherd.metrics;

/**
 * The per-pod quantities a query profile measures. Each profile maps every signal to one PromQL
 * template whose answer has one series per pod, labelled {@code namespace} and {@code pod}.
 */
public enum Signal {
  /** Live bytes after the last major, mixed or concurrent cycle, robust over the window. */
  LIVE_BYTES("liveBytes"),
  /** The heap limit the pod runs with. */
  HEAP_MAX_BYTES("heapMaxBytes"),
  /**
   * GC seconds per second of young collections (on G1 before JDK 20 mixed ones too): their
   * frequency falls as the young generation grows with the heap.
   */
  YOUNG_GC_SECONDS_PER_SECOND("youngGcSecondsPerSecond"),
  /** GC seconds per second of collections whose frequency depends on heap size (old, full). */
  OLD_GC_SECONDS_PER_SECOND("oldGcSecondsPerSecond"),
  /**
   * Old-generation and full collections per second (their pauses): with the old GC time, the mean
   * pause under Serial and Parallel.
   */
  OLD_COLLECTIONS_PER_SECOND("oldCollectionsPerSecond", false),
  /** Bytes promoted into the old generation per second. */
  PROMOTION_BYTES_PER_SECOND("promotionBytesPerSecond", false),
  /** Young-generation capacity (eden and survivor pools, committed), averaged over the window. */
  YOUNG_CAPACITY_BYTES("youngCapacityBytes", false),
  /** Old-generation pool maximum: two thirds of the heap under Serial and Parallel by default. */
  OLD_CAPACITY_BYTES("oldCapacityBytes", false),
  /** The most held after an old-generation collection over the start-up lookback. */
  STARTUP_LIVE_BYTES("startupLiveBytes", false),
  /** Bytes allocated per second. */
  ALLOCATION_BYTES_PER_SECOND("allocationBytesPerSecond", false),
  /** High-water of memory beyond the heap: RSS or committed non-heap minus committed heap. */
  NON_HEAP_BYTES("nonHeapBytes"),
  /** One series per pod and collector name, labelled {@code collector}; the value is ignored. */
  COLLECTOR_NAMES("collectorNames"),
  /** Samples scraped from the pod over the window. */
  SAMPLE_COUNT("sampleCount"),
  /** Counter resets over the window: a restarted JVM has not reached steady state. */
  RESTARTS("restarts");

  private final String key;
  private final boolean required;

  Signal(String key) {
    this(key, true);
  }

  Signal(String key, boolean required) {
    this.key = key;
    this.required = required;
  }

  /** False for signals some instrumentations do not export; estimates then go without them. */
  public boolean required() {
    return required;
  }

  /** The name used for overrides in pool files. */
  public String key() {
    return key;
  }
}
