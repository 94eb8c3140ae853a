package dev.heapherd.metrics;

import java.util.EnumMap;
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
 *
 * <p>Over 250 lines because it is data: every query of every profile in one place, where an
 * operator looking for what heapherd asks Prometheus can read them all.
 */
public final class QueryProfiles {

  /** GarbageCollectorMXBean names of collections whose frequency falls as the heap grows. */
  static final String OLD_COLLECTORS =
      "MarkSweepCompact|PS MarkSweep|G1 Old Generation|G1 Concurrent GC"
          + "|ZGC Cycles|ZGC Major Cycles|Shenandoah Cycles";

  /** MemoryPoolMXBean names of the pool that holds long-lived objects. */
  static final String OLD_POOLS =
      "Tenured Gen|PS Old Gen|G1 Old Gen|ZHeap|ZGC Old Generation|Shenandoah";

  /** MemoryPoolMXBean names of the young generation's pools (generational ZGC: JDK 21+). */
  static final String YOUNG_POOLS =
      "Eden Space|Survivor Space|PS Eden Space|PS Survivor Space|G1 Eden Space|G1 Survivor Space"
          + "|ZGC Young Generation";

  /** Every heap pool name above, for instrumentations that do not label pools heap or not. */
  static final String HEAP_POOLS = YOUNG_POOLS + "|" + OLD_POOLS;

  /**
   * Survivor pools of collectors that keep two survivor spaces and report one: Serial and Parallel.
   * Adding one more to the pools' maxima gives the heap limit (-Xmx) to within the spaces'
   * alignment, where the pools' sum alone falls one survivor space short.
   */
  static final String TWIN_SURVIVOR_POOLS = "Survivor Space|PS Survivor Space";

  /**
   * How far back the start-up need is looked for: a day, well inside Prometheus' default retention
   * of 15 days (its documented default), long enough to cover a pod's start after a rollout.
   */
  static final String STARTUP_LOOKBACK = "1d";

  private static final String BY_POD = "by (namespace, pod)";

  /** Scrapes per pod in the window, from Prometheus' own up series: the same for every profile. */
  private static final List<String> SCRAPES =
      List.of(perPod("sum", "count_over_time(", series("up")));

  /**
   * Keeps an after-GC figure only for pods whose old generation was collected in the window: the
   * figure is otherwise left over from an old collection long ago (a startup full GC, say).
   */
  private static final String OLD_CYCLE_IN_WINDOW =
      " and on (namespace, pod) (sum by (namespace, pod) (increase(%s[${window}])) > 0)";

  private static final String MINOR = "\"end of minor GC\"";

  /** Micrometer's JVM binders exported through its Prometheus registry. */
  public static final QueryProfile MICROMETER =
      new QueryProfile(
          "micrometer",
          "GC time: pause durations plus concurrent-phase durations where exported (wall time)",
          templates(
              Signal.LIVE_BYTES,
              List.of(
                  // Updated by Micrometer only after old-generation and concurrent cycles; zero
                  // until the first one, hence "!= 0" (which keeps NaN, so it is reported).
                  afterGc(
                      perPod(
                          "max", "quantile_over_time(0.5, ", series("jvm_gc_live_data_size_bytes")),
                      series(
                          "__name__=~\"jvm_gc_pause_seconds_count|jvm_gc_concurrent_phase_time_seconds_count\"",
                          "action!=" + MINOR)),
                  perPod(
                      "sum",
                      "min_over_time(",
                      series(
                          "jvm_memory_used_bytes", "area=\"heap\"", "id=~\"" + OLD_POOLS + "\""))),
              Signal.HEAP_MAX_BYTES,
              List.of(heapLimit("jvm_memory_max_bytes", "area=\"heap\"", "id")),
              Signal.YOUNG_GC_SECONDS_PER_SECOND,
              List.of(
                  perPod("sum", "rate(", series("jvm_gc_pause_seconds_sum", "action=" + MINOR))),
              Signal.OLD_GC_SECONDS_PER_SECOND,
              List.of(
                  perPod(
                      "sum",
                      "rate(",
                      series(
                          "__name__=~\"jvm_gc_pause_seconds_sum|jvm_gc_concurrent_phase_time_seconds_sum\"",
                          "action!=" + MINOR))),
              Signal.OLD_COLLECTIONS_PER_SECOND,
              List.of(
                  perPod("sum", "rate(", series("jvm_gc_pause_seconds_count", "action!=" + MINOR))),
              Signal.PROMOTION_BYTES_PER_SECOND,
              List.of(perPod("sum", "rate(", series("jvm_gc_memory_promoted_bytes_total"))),
              Signal.YOUNG_CAPACITY_BYTES,
              List.of(youngCapacity("jvm_memory_committed_bytes", "area=\"heap\"", "id")),
              Signal.OLD_CAPACITY_BYTES,
              List.of(oldCapacity("jvm_memory_max_bytes", "area=\"heap\"", "id")),
              Signal.STARTUP_LIVE_BYTES,
              List.of(
                  perPodOver(
                      "max",
                      "max_over_time(",
                      series("jvm_gc_live_data_size_bytes"),
                      STARTUP_LOOKBACK)),
              Signal.ALLOCATION_BYTES_PER_SECOND,
              List.of(perPod("sum", "rate(", series("jvm_gc_memory_allocated_bytes_total"))),
              Signal.NON_HEAP_BYTES,
              List.of(
                  // Committed non-heap pools plus direct and mapped buffers, each at its
                  // high-water.
                  perPod(
                      "sum",
                      "max_over_time(",
                      series(
                          "__name__=~\"jvm_memory_committed_bytes|jvm_buffer_memory_used_bytes\"",
                          "area!=\"heap\""))),
              Signal.COLLECTOR_NAMES,
              collectors("jvm_gc_pause_seconds_count", "gc"),
              Signal.SAMPLE_COUNT,
              SCRAPES,
              Signal.RESTARTS,
              List.of(perPod("sum", "resets(", series("jvm_gc_memory_allocated_bytes_total")))));

  /** Prometheus client_java's JVM instrumentation (JvmMetrics) with its process metrics. */
  public static final QueryProfile CLIENT_JAVA =
      new QueryProfile(
          "client-java",
          "GC time: GarbageCollectorMXBean collection times (pauses; concurrent cycles where the"
              + " JVM has a bean for them)",
          templates(
              Signal.LIVE_BYTES,
              List.of(
                  // MemoryPoolMXBean collection usage: zero until that pool is collected, which
                  // for G1 Old Gen means a full GC; hence "!= 0" and the occupancy fallback.
                  afterGc(
                      perPod(
                          "max",
                          "min_over_time(",
                          series(
                              "jvm_memory_pool_collection_used_bytes",
                              "pool=~\"" + OLD_POOLS + "\"")),
                      series("jvm_gc_collection_seconds_count", "gc=~\"" + OLD_COLLECTORS + "\"")),
                  perPod(
                      "sum",
                      "min_over_time(",
                      series("jvm_memory_pool_used_bytes", "pool=~\"" + OLD_POOLS + "\""))),
              Signal.HEAP_MAX_BYTES,
              List.of(
                  heapLimit("jvm_memory_pool_max_bytes", "pool=~\"" + HEAP_POOLS + "\"", "pool"),
                  perPod("max", "max_over_time(", series("jvm_memory_max_bytes", "area=\"heap\""))),
              Signal.YOUNG_GC_SECONDS_PER_SECOND,
              List.of(
                  perPod(
                      "sum",
                      "rate(",
                      series("jvm_gc_collection_seconds_sum", "gc!~\"" + OLD_COLLECTORS + "\""))),
              Signal.OLD_GC_SECONDS_PER_SECOND,
              List.of(
                  perPod(
                      "sum",
                      "rate(",
                      series("jvm_gc_collection_seconds_sum", "gc=~\"" + OLD_COLLECTORS + "\""))),
              Signal.OLD_COLLECTIONS_PER_SECOND,
              List.of(
                  perPod(
                      "sum",
                      "rate(",
                      series("jvm_gc_collection_seconds_count", "gc=~\"" + OLD_COLLECTORS + "\""))),
              Signal.PROMOTION_BYTES_PER_SECOND,
              List.of(
                  // Bytes the library saw arrive in the old pool across collections: promotion.
                  perPod(
                      "sum",
                      "rate(",
                      series(
                          "jvm_memory_pool_allocated_bytes_total", "pool=~\"" + OLD_POOLS + "\""))),
              Signal.YOUNG_CAPACITY_BYTES,
              List.of(
                  youngCapacity(
                      "jvm_memory_pool_committed_bytes", "pool=~\"" + HEAP_POOLS + "\"", "pool")),
              Signal.OLD_CAPACITY_BYTES,
              List.of(
                  oldCapacity("jvm_memory_pool_max_bytes", "pool=~\"" + HEAP_POOLS + "\"", "pool")),
              Signal.NON_HEAP_BYTES,
              List.of(
                  // High-water of resident memory beyond the committed heap, per scrape.
                  "max "
                      + BY_POD
                      + " (max_over_time(("
                      + series("process_resident_memory_bytes")
                      + " - on (namespace, pod) "
                      + series("jvm_memory_committed_bytes", "area=\"heap\"")
                      + ")[${window}:])) > 0",
                  perPod(
                      "sum",
                      "max_over_time(",
                      series("jvm_memory_committed_bytes", "area=\"nonheap\""))),
              Signal.COLLECTOR_NAMES,
              collectors("jvm_gc_collection_seconds_count", "gc"),
              Signal.SAMPLE_COUNT,
              SCRAPES,
              Signal.RESTARTS,
              List.of(perPod("sum", "changes(", series("process_start_time_seconds")))));

  /**
   * The OpenTelemetry Java agent's runtime metrics through its Prometheus exporter. The agent
   * exports no promotion figure.
   */
  public static final QueryProfile OTEL =
      new QueryProfile(
          "otel",
          "GC time: GC notification durations (pauses; concurrent cycles where the JVM reports"
              + " them)",
          templates(
              Signal.LIVE_BYTES,
              List.of(
                  afterGc(
                      perPod(
                          "max",
                          "min_over_time(",
                          series(
                              "jvm_memory_used_after_last_gc_bytes",
                              "jvm_memory_pool_name=~\"" + OLD_POOLS + "\"")),
                      series("jvm_gc_duration_seconds_count", "jvm_gc_action!=" + MINOR)),
                  perPod(
                      "sum",
                      "min_over_time(",
                      series(
                          "jvm_memory_used_bytes", "jvm_memory_pool_name=~\"" + OLD_POOLS + "\""))),
              Signal.HEAP_MAX_BYTES,
              List.of(
                  heapLimit(
                      "jvm_memory_limit_bytes",
                      "jvm_memory_type=\"heap\"",
                      "jvm_memory_pool_name")),
              Signal.YOUNG_CAPACITY_BYTES,
              List.of(
                  youngCapacity(
                      "jvm_memory_committed_bytes",
                      "jvm_memory_type=\"heap\"",
                      "jvm_memory_pool_name")),
              Signal.OLD_CAPACITY_BYTES,
              List.of(
                  oldCapacity(
                      "jvm_memory_limit_bytes",
                      "jvm_memory_type=\"heap\"",
                      "jvm_memory_pool_name")),
              Signal.YOUNG_GC_SECONDS_PER_SECOND,
              List.of(
                  perPod(
                      "sum",
                      "rate(",
                      series("jvm_gc_duration_seconds_sum", "jvm_gc_action=" + MINOR))),
              Signal.OLD_GC_SECONDS_PER_SECOND,
              List.of(
                  perPod(
                      "sum",
                      "rate(",
                      series("jvm_gc_duration_seconds_sum", "jvm_gc_action!=" + MINOR))),
              Signal.OLD_COLLECTIONS_PER_SECOND,
              List.of(
                  perPod(
                      "sum",
                      "rate(",
                      series("jvm_gc_duration_seconds_count", "jvm_gc_action!=" + MINOR))),
              Signal.NON_HEAP_BYTES,
              List.of(
                  perPod(
                      "sum",
                      "max_over_time(",
                      series("jvm_memory_committed_bytes", "jvm_memory_type=\"non_heap\""))),
              Signal.COLLECTOR_NAMES,
              collectors("jvm_gc_duration_seconds_count", "jvm_gc_name"),
              Signal.SAMPLE_COUNT,
              SCRAPES,
              Signal.RESTARTS,
              List.of(perPod("sum", "resets(", series("jvm_cpu_time_seconds_total")))));

  private QueryProfiles() {}

  /** Signal and templates, alternating: more pairs than {@code Map.of} takes. */
  @SuppressWarnings("unchecked")
  private static Map<Signal, List<String>> templates(Object... pairs) {
    Map<Signal, List<String>> out = new EnumMap<>(Signal.class);
    for (int i = 0; i < pairs.length; i += 2) {
      out.put((Signal) pairs[i], (List<String>) pairs[i + 1]);
    }
    return out;
  }

  /** All built-in profiles. */
  public static List<QueryProfile> all() {
    return List.of(MICROMETER, CLIENT_JAVA, OTEL);
  }

  /** The built-in profile called {@code name}. */
  public static Optional<QueryProfile> named(String name) {
    return all().stream().filter(p -> p.name().equals(name)).findFirst();
  }

  /**
   * {@code metric{${selector},matchers...}}; a metric given as a {@code __name__} matcher goes
   * inside the braces.
   */
  private static String series(String metric, String... matchers) {
    StringBuilder out = new StringBuilder();
    if (metric.startsWith("__name__")) {
      out.append('{').append(metric).append(",${selector}");
    } else {
      out.append(metric).append("{${selector}");
    }
    for (String matcher : matchers) {
      out.append(',').append(matcher);
    }
    return out.append('}').toString();
  }

  /** {@code aggregation by (namespace, pod) (call series[${window}]))}: one series per pod. */
  private static String perPod(String aggregation, String call, String series) {
    return perPodOver(aggregation, call, series, "${window}");
  }

  private static String perPodOver(String aggregation, String call, String series, String range) {
    return aggregation + " " + BY_POD + " (" + call + series + "[" + range + "]))";
  }

  /**
   * The heap limit from the heap pools' maxima ({@code poolMatcher} selects heap pools, {@code
   * poolLabel} names them): their sum, plus one more survivor space where the collector keeps two
   * and reports one ({@link #TWIN_SURVIVOR_POOLS}), added up per scrape and then taken at its
   * highest over the window. Summing each pool's own highest would overstate it: Parallel resizes
   * its survivor spaces as it runs and reports eden's maximum as what they leave, so the pools'
   * peaks come from different moments. Pools without a maximum report -1 (G1's eden and survivor)
   * and are left out; the old pool's maximum times 0 keeps pods without a twin.
   */
  private static String heapLimit(String metric, String poolMatcher, String poolLabel) {
    String pools = series(metric, poolMatcher);
    String twins = series(metric, poolMatcher, poolLabel + "=~\"" + TWIN_SURVIVOR_POOLS + "\"");
    String old = series(metric, poolMatcher, poolLabel + "=~\"" + OLD_POOLS + "\"");
    return "max "
        + BY_POD
        + " (max_over_time((sum "
        + BY_POD
        + " ("
        + pools
        + " > 0) + on (namespace, pod) sum "
        + BY_POD
        + " (("
        + twins
        + " > 0) or 0 * "
        + old
        + "))[${window}:]))";
  }

  /** Eden and survivor pools' committed sizes, averaged over the window. */
  private static String youngCapacity(String metric, String poolMatcher, String poolLabel) {
    return perPod(
        "sum",
        "avg_over_time(",
        series(metric, poolMatcher, poolLabel + "=~\"" + YOUNG_POOLS + "\""));
  }

  /** The old pool's maximum (heap pools selected by {@code poolMatcher}, named by the label). */
  private static String oldCapacity(String metric, String poolMatcher, String poolLabel) {
    return perPod(
            "sum",
            "max_over_time(",
            series(metric, poolMatcher, poolLabel + "=~\"" + OLD_POOLS + "\""))
        + " > 0";
  }

  /** An after-GC figure, kept only where it is set and fresh (see {@link #OLD_CYCLE_IN_WINDOW}). */
  private static String afterGc(String figure, String oldCycles) {
    return figure + " != 0" + OLD_CYCLE_IN_WINDOW.formatted(oldCycles);
  }

  /** One series per pod and collector, named by {@code label} of {@code metric}. */
  private static List<String> collectors(String metric, String label) {
    return List.of(
        "count by (namespace, pod, collector) (label_replace("
            + series(metric)
            + ", \"collector\", \"$1\", \""
            + label
            + "\", \"(.*)\"))");
  }
}
