package dev.heapherd.input;

import dev.heapherd.engine.CurvePoint;
import java.time.Instant;
import java.util.List;
import java.util.OptionalDouble;
import java.util.OptionalLong;

/**
 * Per-workload metrics over one window: the input a plan is computed from.
 *
 * @param capturedAt end of the window
 * @param windowSeconds length of the window the rates were averaged over
 * @param workloads one entry per workload
 */
public record Snapshot(
    Instant capturedAt, long windowSeconds, List<Workload> workloads, List<Held> held) {

  /** Makes the lists immutable. */
  public Snapshot {
    workloads = List.copyOf(workloads);
    held = List.copyOf(held);
  }

  /**
   * Memory the held workloads' containers use now, as far as the snapshot knows it: they are not
   * resized, but they still take their share of the budget.
   */
  public long heldMemoryBytes() {
    return held.stream().mapToLong(Held::memoryBytes).sum();
  }

  /**
   * A workload that was found but not measured well enough to plan: it keeps its sizes.
   *
   * @param name the workload
   * @param reason why it is held
   * @param memoryBytes what its containers use now (replicas x memory limit), 0 when not known
   */
  public record Held(String name, String reason, long memoryBytes) {
    /** A held workload whose memory is not known. */
    public Held(String name, String reason) {
      this(name, reason, 0);
    }
  }

  /**
   * How much to trust one workload's numbers.
   *
   * @param sampleCount fewest scrapes of any of its pods in the window (0 when not known)
   * @param confidence High, Medium or Low ("" when not known)
   * @param notes what the estimators had to do, e.g. which source gave live bytes
   */
  public record Evidence(long sampleCount, String confidence, List<String> notes) {
    /** Copies the notes. */
    public Evidence {
      notes = List.copyOf(notes);
    }

    /** Nothing known: a snapshot written by hand. */
    public static final Evidence NONE = new Evidence(0, "", List.of());
  }

  /**
   * One workload's measurements, per pod.
   *
   * @param name Deployment or StatefulSet name
   * @param kind Deployment or StatefulSet
   * @param replicas pods
   * @param collector garbage collector in use
   * @param heapMaxBytes the heap limit the pods run with
   * @param liveBytes live bytes after a major or concurrent cycle
   * @param gcSecondsPerSecond total GC time rate
   * @param youngGcSecondsPerSecond the part of it spent in young collections (on G1 before JDK 20
   *     mixed collections too), which falls as the young generation grows with the heap
   * @param offsetBytes headroom below which the collector thrashes (E0)
   * @param promotionBytesPerSecond bytes entering the old generation per second, if measured
   * @param collectorBytesPerSecond live bytes traced per second of GC time, if measured
   * @param nonHeapBytes memory beyond the heap: high-water of RSS minus committed heap
   * @param evidence how much to trust these numbers
   * @param layout generation sizes, start-up need and the heap-independent GC time, where known
   */
  public record Workload(
      String name,
      String kind,
      int replicas,
      String collector,
      long heapMaxBytes,
      long liveBytes,
      double gcSecondsPerSecond,
      double youngGcSecondsPerSecond,
      long offsetBytes,
      OptionalDouble promotionBytesPerSecond,
      OptionalDouble collectorBytesPerSecond,
      long nonHeapBytes,
      Evidence evidence,
      Layout layout) {

    /** Today's measurement as a point of the curve. */
    public CurvePoint point() {
      return new CurvePoint(
          heapMaxBytes,
          liveBytes,
          youngGcSecondsPerSecond,
          Math.max(0, gcSecondsPerSecond - youngGcSecondsPerSecond));
    }

    /** This workload with {@code replicas} pods. */
    public Workload withReplicas(int replicas) {
      return with(replicas, layout);
    }

    /** This workload with {@code layout}. */
    public Workload withLayout(Layout layout) {
      return with(replicas, layout);
    }

    private Workload with(int replicas, Layout layout) {
      return new Workload(
          name,
          kind,
          replicas,
          collector,
          heapMaxBytes,
          liveBytes,
          gcSecondsPerSecond,
          youngGcSecondsPerSecond,
          offsetBytes,
          promotionBytesPerSecond,
          collectorBytesPerSecond,
          nonHeapBytes,
          evidence,
          layout);
    }
  }

  /**
   * What a workload's generations hold and need, where measured or declared.
   *
   * @param youngCapacityBytes young-generation capacity (eden plus survivors) under the current
   *     heap
   * @param oldCapacityBytes old-generation maximum under the current heap
   * @param startupLiveBytes the most held after a collection since the pods started
   * @param allocationBytesPerSecond bytes allocated per second
   * @param steadyGcSecondsPerSecond GC time that no heap size changes (Y), 0 when not known
   * @param history GC times measured earlier under other heaps, oldest first
   */
  public record Layout(
      OptionalLong youngCapacityBytes,
      OptionalLong oldCapacityBytes,
      OptionalLong startupLiveBytes,
      OptionalDouble allocationBytesPerSecond,
      double steadyGcSecondsPerSecond,
      List<CurvePoint> history) {

    /** Copies the history. */
    public Layout {
      history = List.copyOf(history);
    }

    /** This layout with {@code points} as its history. */
    public Layout withHistory(List<CurvePoint> points) {
      return new Layout(
          youngCapacityBytes,
          oldCapacityBytes,
          startupLiveBytes,
          allocationBytesPerSecond,
          steadyGcSecondsPerSecond,
          points);
    }

    /** Nothing known beyond the required fields: a snapshot written by hand. */
    public static final Layout UNKNOWN =
        new Layout(
            OptionalLong.empty(),
            OptionalLong.empty(),
            OptionalLong.empty(),
            OptionalDouble.empty(),
            0,
            List.of());
  }
}
