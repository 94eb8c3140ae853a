package dev.heapherd.metrics;

import java.util.List;
import java.util.Map;
import java.util.Optional;

/**
 * The built-in query profiles, one per common JVM instrumentation. Collector names in the regular
 * expressions are the HotSpot GarbageCollectorMXBean and MemoryPoolMXBean names: young
 * collectors "Copy" (Serial), "PS Scavenge" (Parallel), "G1 Young Generation"; old collectors
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
  static final String OLD_POOLS = "Tenured Gen|PS Old Gen|G1 Old Gen|ZHeap|ZGC Old Generation|Shenandoah";

  private static final String BY_POD = "by (namespace, pod)";

  /** Micrometer's JVM binders exported through its Prometheus registry. */
  public static final QueryProfile MICROMETER =
      new QueryProfile(
          "micrometer",
          Map.of(
              Signal.LIVE_BYTES,
              List.of(
                  // Updated by Micrometer only after old-generation and concurrent cycles; zero
                  // until the first one, hence "!= 0" (which keeps NaN, so it is reported).
                  "max " + BY_POD
                      + " (quantile_over_time(0.5, jvm_gc_live_data_size_bytes{${selector}}[${window}])) != 0",
                  "sum " + BY_POD
                      + " (min_over_time(jvm_memory_used_bytes{${selector},area=\"heap\",id=~\""
                      + OLD_POOLS
                      + "\"}[${window}]))"),
              Signal.HEAP_MAX_BYTES,
              List.of(
                  "sum " + BY_POD
                      + " (max_over_time(jvm_memory_max_bytes{${selector},area=\"heap\"}[${window}]) > 0)"),
              Signal.YOUNG_GC_SECONDS_PER_SECOND,
              List.of(
                  "sum " + BY_POD
                      + " (rate(jvm_gc_pause_seconds_sum{${selector},action=\"end of minor GC\"}[${window}]))"),
              Signal.OLD_GC_SECONDS_PER_SECOND,
              List.of(
                  "sum " + BY_POD
                      + " (rate({__name__=~\"jvm_gc_pause_seconds_sum|jvm_gc_concurrent_phase_time_seconds_sum\","
                      + "${selector},action!=\"end of minor GC\"}[${window}]))"),
              Signal.PROMOTION_BYTES_PER_SECOND,
              List.of(
                  "sum " + BY_POD
                      + " (rate(jvm_gc_memory_promoted_bytes_total{${selector}}[${window}]))"),
              Signal.NON_HEAP_BYTES,
              List.of(
                  // Committed non-heap pools plus direct and mapped buffers, each at its high-water.
                  "sum " + BY_POD
                      + " (max_over_time({__name__=~\"jvm_memory_committed_bytes|jvm_buffer_memory_used_bytes\","
                      + "${selector},area!=\"heap\"}[${window}]))"),
              Signal.COLLECTOR_NAMES,
              List.of(
                  "count by (namespace, pod, collector) (label_replace("
                      + "jvm_gc_pause_seconds_count{${selector}}, \"collector\", \"$1\", \"gc\", \"(.*)\"))"),
              Signal.SAMPLE_COUNT,
              List.of("sum " + BY_POD + " (count_over_time(up{${selector}}[${window}]))"),
              Signal.RESTARTS,
              List.of(
                  "sum " + BY_POD
                      + " (resets(jvm_gc_memory_allocated_bytes_total{${selector}}[${window}]))")));

  private QueryProfiles() {}

  /** All built-in profiles. */
  public static List<QueryProfile> all() {
    return List.of(MICROMETER);
  }

  /** The built-in profile called {@code name}. */
  public static Optional<QueryProfile> named(String name) {
    return all().stream().filter(p -> p.name().equals(name)).findFirst();
  }
}
