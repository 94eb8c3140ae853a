package dev.heapherd.metrics;

import java.util.List;
import java.util.Map;
import java.util.Optional;

/**
 * The built-in query profiles, one per common JVM instrumentation. Collector names in the regular
 * expressions are the HotSpot GarbageCollectorMXBean and MemoryPoolMXBean names: young collectors
 * "Copy" (Serial), "PS Scavenge" (Parallel), "G1 Young Generation"; old collectors
 * "MarkSweepCompact", "PS MarkSweep", "G1 Old Generation", "G1 Concurrent GC" (JDK 20+); the
 * concurrent collectors' "ZGC Cycles", "ZGC Major Cycles", "Shenandoah Cycles"; old pools "Tenured
 * Gen", "PS Old Gen", "G1 Old Gen", and the single-pool "ZHeap" and "Shenandoah".
 */
public final class QueryProfiles {

  /** GarbageCollectorMXBean names of collections whose frequency falls as the heap grows. */
  static final String OLD_COLLECTORS =
      "MarkSweepCompact|PS MarkSweep|G1 Old Generation|G1 Concurrent GC"
          + "|ZGC Cycles|ZGC Major Cycles|Shenandoah Cycles";

  /** MemoryPoolMXBean names of the pool that holds long-lived objects. */
  static final String OLD_POOLS =
      "Tenured Gen|PS Old Gen|G1 Old Gen|ZHeap|ZGC Old Generation|Shenandoah";

  private static final String BY_POD = "by (namespace, pod)";

  /** Scrapes per pod in the window, from Prometheus' own up series: the same for every profile. */
  private static final List<String> SCRAPES =
      List.of("sum " + BY_POD + " (count_over_time(up{${selector}}[${window}]))");

  /**
   * Keeps an after-GC figure only for pods whose old generation was collected in the window: the
   * figure is otherwise left over from an old collection long ago (a startup full GC, say).
   */
  private static final String OLD_CYCLE_IN_WINDOW =
      " and on (namespace, pod) (sum by (namespace, pod) (increase(%s[${window}])) > 0)";

  /** Micrometer's JVM binders exported through its Prometheus registry. */
  public static final QueryProfile MICROMETER =
      new QueryProfile(
          "micrometer",
          "GC time: pause durations plus concurrent-phase durations where exported (wall time)",
          Map.of(
              Signal.LIVE_BYTES,
              List.of(
                  // Updated by Micrometer only after old-generation and concurrent cycles; zero
                  // until the first one, hence "!= 0" (which keeps NaN, so it is reported).
                  "max "
                      + BY_POD
                      + " (quantile_over_time(0.5, jvm_gc_live_data_size_bytes{${selector}}[${window}])) != 0"
                      + OLD_CYCLE_IN_WINDOW.formatted(
                          "{__name__=~\"jvm_gc_pause_seconds_count|jvm_gc_concurrent_phase_time_seconds_count\","
                              + "${selector},action!=\"end of minor GC\"}"),
                  "sum "
                      + BY_POD
                      + " (min_over_time(jvm_memory_used_bytes{${selector},area=\"heap\",id=~\""
                      + OLD_POOLS
                      + "\"}[${window}]))"),
              Signal.HEAP_MAX_BYTES,
              List.of(
                  "sum "
                      + BY_POD
                      + " (max_over_time(jvm_memory_max_bytes{${selector},area=\"heap\"}[${window}]) > 0)"),
              Signal.YOUNG_GC_SECONDS_PER_SECOND,
              List.of(
                  "sum "
                      + BY_POD
                      + " (rate(jvm_gc_pause_seconds_sum{${selector},action=\"end of minor GC\"}[${window}]))"),
              Signal.OLD_GC_SECONDS_PER_SECOND,
              List.of(
                  "sum "
                      + BY_POD
                      + " (rate({__name__=~\"jvm_gc_pause_seconds_sum|jvm_gc_concurrent_phase_time_seconds_sum\","
                      + "${selector},action!=\"end of minor GC\"}[${window}]))"),
              Signal.PROMOTION_BYTES_PER_SECOND,
              List.of(
                  "sum "
                      + BY_POD
                      + " (rate(jvm_gc_memory_promoted_bytes_total{${selector}}[${window}]))"),
              Signal.NON_HEAP_BYTES,
              List.of(
                  // Committed non-heap pools plus direct and mapped buffers, each at its
                  // high-water.
                  "sum "
                      + BY_POD
                      + " (max_over_time({__name__=~\"jvm_memory_committed_bytes|jvm_buffer_memory_used_bytes\","
                      + "${selector},area!=\"heap\"}[${window}]))"),
              Signal.COLLECTOR_NAMES,
              List.of(
                  "count by (namespace, pod, collector) (label_replace("
                      + "jvm_gc_pause_seconds_count{${selector}}, \"collector\", \"$1\", \"gc\", \"(.*)\"))"),
              Signal.SAMPLE_COUNT,
              SCRAPES,
              Signal.RESTARTS,
              List.of(
                  "sum "
                      + BY_POD
                      + " (resets(jvm_gc_memory_allocated_bytes_total{${selector}}[${window}]))")));

  /** Prometheus client_java's JVM instrumentation (JvmMetrics) with its process metrics. */
  public static final QueryProfile CLIENT_JAVA =
      new QueryProfile(
          "client-java",
          "GC time: GarbageCollectorMXBean collection times (pauses; concurrent cycles where the"
              + " JVM has a bean for them)",
          Map.of(
              Signal.LIVE_BYTES,
              List.of(
                  // MemoryPoolMXBean collection usage: zero until that pool is collected, which
                  // for G1 Old Gen means a full GC; hence "!= 0" and the occupancy fallback.
                  "max "
                      + BY_POD
                      + " (min_over_time(jvm_memory_pool_collection_used_bytes{${selector},pool=~\""
                      + OLD_POOLS
                      + "\"}[${window}])) != 0"
                      + OLD_CYCLE_IN_WINDOW.formatted(
                          "jvm_gc_collection_seconds_count{${selector},gc=~\""
                              + OLD_COLLECTORS
                              + "\"}"),
                  "sum "
                      + BY_POD
                      + " (min_over_time(jvm_memory_pool_used_bytes{${selector},pool=~\""
                      + OLD_POOLS
                      + "\"}[${window}]))"),
              Signal.HEAP_MAX_BYTES,
              List.of(
                  "max "
                      + BY_POD
                      + " (max_over_time(jvm_memory_max_bytes{${selector},area=\"heap\"}[${window}]))"),
              Signal.YOUNG_GC_SECONDS_PER_SECOND,
              List.of(
                  "sum "
                      + BY_POD
                      + " (rate(jvm_gc_collection_seconds_sum{${selector},gc!~\""
                      + OLD_COLLECTORS
                      + "\"}[${window}]))"),
              Signal.OLD_GC_SECONDS_PER_SECOND,
              List.of(
                  "sum "
                      + BY_POD
                      + " (rate(jvm_gc_collection_seconds_sum{${selector},gc=~\""
                      + OLD_COLLECTORS
                      + "\"}[${window}]))"),
              Signal.PROMOTION_BYTES_PER_SECOND,
              List.of(
                  // Bytes the library saw arrive in the old pool across collections: promotion.
                  "sum "
                      + BY_POD
                      + " (rate(jvm_memory_pool_allocated_bytes_total{${selector},pool=~\""
                      + OLD_POOLS
                      + "\"}[${window}]))"),
              Signal.NON_HEAP_BYTES,
              List.of(
                  // High-water of resident memory beyond the committed heap, per scrape.
                  "max "
                      + BY_POD
                      + " (max_over_time((process_resident_memory_bytes{${selector}}"
                      + " - on (namespace, pod) jvm_memory_committed_bytes{${selector},area=\"heap\"})"
                      + "[${window}:])) > 0",
                  "sum "
                      + BY_POD
                      + " (max_over_time(jvm_memory_committed_bytes{${selector},area=\"nonheap\"}[${window}]))"),
              Signal.COLLECTOR_NAMES,
              List.of(
                  "count by (namespace, pod, collector) (label_replace("
                      + "jvm_gc_collection_seconds_count{${selector}}, \"collector\", \"$1\", \"gc\", \"(.*)\"))"),
              Signal.SAMPLE_COUNT,
              SCRAPES,
              Signal.RESTARTS,
              List.of(
                  "sum "
                      + BY_POD
                      + " (changes(process_start_time_seconds{${selector}}[${window}]))")));

  /**
   * The OpenTelemetry Java agent's runtime metrics through its Prometheus exporter. The agent
   * exports no promotion figure.
   */
  public static final QueryProfile OTEL =
      new QueryProfile(
          "otel",
          "GC time: GC notification durations (pauses; concurrent cycles where the JVM reports"
              + " them)",
          Map.of(
              Signal.LIVE_BYTES,
              List.of(
                  "max "
                      + BY_POD
                      + " (min_over_time(jvm_memory_used_after_last_gc_bytes{${selector},"
                      + "jvm_memory_pool_name=~\""
                      + OLD_POOLS
                      + "\"}[${window}])) != 0"
                      + OLD_CYCLE_IN_WINDOW.formatted(
                          "jvm_gc_duration_seconds_count{${selector},jvm_gc_action!=\"end of minor GC\"}"),
                  "sum "
                      + BY_POD
                      + " (min_over_time(jvm_memory_used_bytes{${selector},jvm_memory_pool_name=~\""
                      + OLD_POOLS
                      + "\"}[${window}]))"),
              Signal.HEAP_MAX_BYTES,
              List.of(
                  "sum "
                      + BY_POD
                      + " (max_over_time(jvm_memory_limit_bytes{${selector},jvm_memory_type=\"heap\"}[${window}]))"),
              Signal.YOUNG_GC_SECONDS_PER_SECOND,
              List.of(
                  "sum "
                      + BY_POD
                      + " (rate(jvm_gc_duration_seconds_sum{${selector},jvm_gc_action=\"end of minor GC\"}[${window}]))"),
              Signal.OLD_GC_SECONDS_PER_SECOND,
              List.of(
                  "sum "
                      + BY_POD
                      + " (rate(jvm_gc_duration_seconds_sum{${selector},jvm_gc_action!=\"end of minor GC\"}[${window}]))"),
              Signal.NON_HEAP_BYTES,
              List.of(
                  "sum "
                      + BY_POD
                      + " (max_over_time(jvm_memory_committed_bytes{${selector},jvm_memory_type=\"non_heap\"}[${window}]))"),
              Signal.COLLECTOR_NAMES,
              List.of(
                  "count by (namespace, pod, collector) (label_replace("
                      + "jvm_gc_duration_seconds_count{${selector}}, \"collector\", \"$1\", \"jvm_gc_name\", \"(.*)\"))"),
              Signal.SAMPLE_COUNT,
              SCRAPES,
              Signal.RESTARTS,
              List.of(
                  "sum "
                      + BY_POD
                      + " (resets(jvm_cpu_time_seconds_total{${selector}}[${window}]))")));

  private QueryProfiles() {}

  /** All built-in profiles. */
  public static List<QueryProfile> all() {
    return List.of(MICROMETER, CLIENT_JAVA, OTEL);
  }

  /** The built-in profile called {@code name}. */
  public static Optional<QueryProfile> named(String name) {
    return all().stream().filter(p -> p.name().equals(name)).findFirst();
  }
}
