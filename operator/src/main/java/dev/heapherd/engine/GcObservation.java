package dev.heapherd.engine;

import java.util.OptionalDouble;
import java.util.OptionalLong;

/**
 * One workload's GC figures at one heap limit, per pod: what the estimators calibrate a cost curve
 * from.
 *
 * @param collector Serial, Parallel, G1, ZGC or Shenandoah
 * @param heapBytes the heap limit the figures were measured under
 * @param liveBytes live bytes after a major, mixed or concurrent cycle
 * @param offsetBytes E0, headroom below which the old generation thrashes
 * @param gcSecondsPerSecond all GC time
 * @param youngGcSecondsPerSecond the part spent in young collections (on G1 before JDK 20 mixed
 *     collections are reported among them)
 * @param steadyGcSecondsPerSecond Y, GC time declared independent of heap size (0 when not known)
 * @param youngCapacityBytes young-generation capacity measured under {@code heapBytes}
 * @param oldCapacityBytes old-generation maximum measured under {@code heapBytes}
 * @param promotionBytesPerSecond g, bytes entering the old generation per second
 * @param collectorBytesPerSecond s, live bytes traced per second of GC time
 */
public record GcObservation(
    String collector,
    long heapBytes,
    long liveBytes,
    long offsetBytes,
    double gcSecondsPerSecond,
    double youngGcSecondsPerSecond,
    double steadyGcSecondsPerSecond,
    OptionalLong youngCapacityBytes,
    OptionalLong oldCapacityBytes,
    OptionalDouble promotionBytesPerSecond,
    OptionalDouble collectorBytesPerSecond) {

  /** The generation split under {@link #heapBytes}. */
  public Generations generations() {
    return Generations.of(collector, heapBytes, youngCapacityBytes, oldCapacityBytes);
  }
}
