package dev.heapherd.input;

import java.time.Instant;
import java.util.List;
import java.util.OptionalDouble;

/**
 * Per-workload metrics over one window: the input a plan is computed from.
 *
 * @param capturedAt end of the window
 * @param windowSeconds length of the window the rates were averaged over
 * @param workloads one entry per workload
 */
public record Snapshot(Instant capturedAt, long windowSeconds, List<Workload> workloads) {

  /** Makes the list immutable. */
  public Snapshot {
    workloads = List.copyOf(workloads);
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
   * @param youngGcSecondsPerSecond the part of it that does not depend on heap size (Y)
   * @param offsetBytes headroom below which the collector thrashes (E0)
   * @param promotionBytesPerSecond bytes entering the old generation per second, if measured
   * @param collectorBytesPerSecond live bytes traced per second of GC time, if measured
   * @param nonHeapBytes memory beyond the heap: high-water of RSS minus committed heap
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
      long nonHeapBytes) {}
}
