package dev.heapherd.metrics;

import dev.heapherd.input.Snapshot;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.Optional;
import java.util.OptionalDouble;
import java.util.OptionalLong;
import java.util.Set;
import java.util.TreeSet;
import java.util.function.ToDoubleFunction;

/**
 * Turns the pods of one workload into the snapshot's per-pod numbers, or holds the workload with a
 * reason when the data cannot be trusted. It never guesses.
 *
 * <p>Over 250 lines: every reason a workload is held (no scrape, a restart, a missing signal, an
 * unknown collector, pods on different heaps, live bytes at the limit) is checked here, one after
 * the other, as docs/metrics.md ("When a workload is held") lists them.
 */
public final class WorkloadEstimator {

  /**
   * Fewest scrapes per pod in a window for rates to be taken seriously: with fewer, one scrape more
   * or less moves a rate by over ten percent. Our choice.
   */
  public static final long MIN_SAMPLES = 10;

  /** Scrapes per pod at which a workload with old-generation collections counts as High. */
  static final long HIGH_CONFIDENCE_SAMPLES = 3 * MIN_SAMPLES;

  /**
   * Growth of the live set between the halves of a window beyond which it is no steady state: a
   * fifth, well above the few percent after-GC figures move in steady state. Our choice.
   */
  static final double MAX_LIVE_GROWTH = 0.2;

  /** Pods whose heap limits differ by more than this fraction are mid-rollout: hold. */
  static final double HEAP_LIMIT_SPREAD = 0.01;

  /** The answer for one workload: measured, or held with a reason. */
  public sealed interface Estimate {
    /** The workload's name. */
    String name();
  }

  /** A workload measured well enough to plan. */
  public record Measured(Snapshot.Workload workload) implements Estimate {
    @Override
    public String name() {
      return workload.name();
    }
  }

  /** A workload held at its current sizes. */
  public record Held(String name, String reason) implements Estimate {}

  private WorkloadEstimator() {}

  /**
   * Estimates workload {@code name} of {@code kind} from its pods.
   *
   * @param gcTimeSource what the GC time figures measure, added to the notes
   */
  public static Estimate estimate(
      String name, String kind, List<PodSignals> pods, String gcTimeSource) {
    if (pods.isEmpty()) {
      return new Held(name, "no pod of it was scraped in the window");
    }
    for (PodSignals pod : pods) {
      for (var entry : pod.values().entrySet()) {
        if (!Double.isFinite(entry.getValue())) {
          return new Held(
              name,
              "Prometheus returned "
                  + entry.getValue()
                  + " for "
                  + entry.getKey().key()
                  + " of pod "
                  + pod.pod());
        }
      }
      long samples = (long) pod.value(Signal.SAMPLE_COUNT).orElse(0);
      if (samples < MIN_SAMPLES) {
        return new Held(
            name,
            "pod "
                + pod.pod()
                + " has "
                + samples
                + " samples in the window, fewer than "
                + MIN_SAMPLES);
      }
      if (pod.value(Signal.RESTARTS).orElse(0) > 0) {
        return new Held(
            name,
            "pod " + pod.pod() + " restarted in the window (a counter reset): not in steady state");
      }
      if (pod.liveGrowth() > MAX_LIVE_GROWTH) {
        return new Held(
            name,
            String.format(
                Locale.ROOT,
                "the live set of pod %s grew %.0f%% within the window: still warming up or leaking",
                pod.pod(),
                100 * pod.liveGrowth()));
      }
      for (Signal required :
          List.of(Signal.HEAP_MAX_BYTES, Signal.LIVE_BYTES, Signal.NON_HEAP_BYTES)) {
        if (pod.value(required).isEmpty()) {
          return new Held(
              name, "no " + required.key() + " for pod " + pod.pod() + missingHint(required));
        }
      }
    }
    Optional<String> collector = collector(pods);
    if (collector.isEmpty()) {
      return new Held(name, "collector unknown: no garbage collection was reported in the window");
    }
    double[] heaps = values(pods, Signal.HEAP_MAX_BYTES);
    if (heaps[heaps.length - 1] > heaps[0] * (1 + HEAP_LIMIT_SPREAD)) {
      return new Held(name, "pods run different heap limits: a rollout is in progress");
    }
    long heapMax = (long) heaps[heaps.length - 1];
    long live = (long) median(values(pods, Signal.LIVE_BYTES));
    if (live >= heapMax) {
      return new Held(name, "live bytes are not below the heap limit");
    }
    double young = mean(values(pods, Signal.YOUNG_GC_SECONDS_PER_SECOND));
    double old = mean(values(pods, Signal.OLD_GC_SECONDS_PER_SECOND));
    if (!(young + old <= 1)) {
      // A pod cannot spend more than all of a second in GC: series are counted twice (a query
      // that does not sum by pod) or a counter misbehaved, so no figure of it can be trusted.
      return new Held(
          name,
          String.format(
              Locale.ROOT,
              "GC time of %.3f seconds per second is above 1: check that the queries count each"
                  + " collection once",
              young + old));
    }
    long samples = (long) values(pods, Signal.SAMPLE_COUNT)[0];
    boolean liveFallback = pods.stream().anyMatch(PodSignals::liveFromFallback);
    List<String> notes = new ArrayList<>();
    notes.add(gcTimeSource);
    OptionalDouble promotion = mean(present(pods, Signal.PROMOTION_BYTES_PER_SECOND));
    OptionalLong oldCapacity =
        whole(present(pods, Signal.OLD_CAPACITY_BYTES), WorkloadEstimator::median);
    Optional<OldCollectionPace> pace =
        OldCollectionPace.of(
            collector.get(),
            old,
            mean(present(pods, Signal.OLD_COLLECTIONS_PER_SECOND)).orElse(0),
            promotion.orElse(0),
            oldCapacity.orElse(0),
            live);
    if (pace.isPresent()) {
      old = pace.get().secondsPerSecond();
      notes.add(pace.get().note());
    }
    if (liveFallback) {
      notes.add(
          "live bytes from the old pool's lowest occupancy: no after-GC figure in the window");
    }
    if (old == 0) {
      notes.add("no old-generation or concurrent collection in the window");
    }
    String confidence =
        liveFallback && old == 0
            ? "Low"
            : !liveFallback && old > 0 && samples >= HIGH_CONFIDENCE_SAMPLES ? "High" : "Medium";
    return new Measured(
        new Snapshot.Workload(
            name,
            kind,
            pods.size(),
            collector.get(),
            heapMax,
            live,
            young + old,
            young,
            0,
            promotion,
            OptionalDouble.empty(),
            (long) values(pods, Signal.NON_HEAP_BYTES)[pods.size() - 1],
            new Snapshot.Evidence(samples, confidence, notes),
            new Snapshot.Layout(
                whole(present(pods, Signal.YOUNG_CAPACITY_BYTES), WorkloadEstimator::mean),
                oldCapacity,
                whole(
                    present(pods, Signal.STARTUP_LIVE_BYTES),
                    sorted -> Math.max(live, sorted[sorted.length - 1])),
                mean(present(pods, Signal.ALLOCATION_BYTES_PER_SECOND)),
                0,
                List.of())));
  }

  /** Sorted values of an optional signal when every pod has one, else empty. */
  private static Optional<double[]> present(List<PodSignals> pods, Signal signal) {
    return pods.stream().allMatch(p -> p.value(signal).isPresent())
        ? Optional.of(values(pods, signal))
        : Optional.empty();
  }

  private static OptionalDouble mean(Optional<double[]> values) {
    return values.map(v -> OptionalDouble.of(mean(v))).orElse(OptionalDouble.empty());
  }

  private static OptionalLong whole(Optional<double[]> values, ToDoubleFunction<double[]> summary) {
    return values
        .map(v -> OptionalLong.of((long) summary.applyAsDouble(v)))
        .orElse(OptionalLong.empty());
  }

  private static String missingHint(Signal signal) {
    return signal == Signal.LIVE_BYTES
        ? ": no old-generation or concurrent cycle finished and no old-pool occupancy was exported"
        : "";
  }

  /**
   * The collector from GarbageCollectorMXBean names (HotSpot's names: "Copy"/"MarkSweepCompact" for
   * Serial, "PS Scavenge"/"PS MarkSweep" for Parallel, "G1 ..." for G1, "ZGC ..." and "Shenandoah
   * ..." for those). Pods that disagree are mid-rollout: unknown.
   */
  static Optional<String> collector(List<PodSignals> pods) {
    Set<String> found = new TreeSet<>();
    for (PodSignals pod : pods) {
      for (String bean : pod.collectorNames()) {
        collectorOf(bean).ifPresent(found::add);
      }
    }
    return found.size() == 1 ? Optional.of(found.iterator().next()) : Optional.empty();
  }

  private static Optional<String> collectorOf(String bean) {
    if (bean.equals("Copy") || bean.equals("MarkSweepCompact")) {
      return Optional.of("Serial");
    }
    if (bean.startsWith("PS ")) {
      return Optional.of("Parallel");
    }
    for (String prefix : List.of("G1", "ZGC", "Shenandoah")) {
      if (bean.startsWith(prefix)) {
        return Optional.of(prefix);
      }
    }
    return Optional.empty();
  }

  /** Sorted values of {@code signal} over pods, absent ones read as 0 (no such collections). */
  private static double[] values(List<PodSignals> pods, Signal signal) {
    return pods.stream().mapToDouble(p -> p.value(signal).orElse(0)).sorted().toArray();
  }

  private static double median(double[] sorted) {
    int mid = sorted.length / 2;
    return sorted.length % 2 == 1 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
  }

  private static double mean(double[] values) {
    return Arrays.stream(values).average().orElse(0);
  }
}
