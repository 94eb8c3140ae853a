package dev.heapherd.engine;

import java.util.OptionalDouble;

/** Estimates a workload's GC cost curve from one metrics observation. */
public final class GcConstants {

  private GcConstants() {}

  /**
   * Calibrates {@code k} from the current heap: the heap-dependent GC time rate times the usable
   * headroom now. Falls back to the promotion model when there is no heap-dependent GC time to
   * calibrate from and its inputs exist, else to k = 0.
   *
   * @param gcSecondsPerSecond measured total GC time rate
   * @param heapIndependentSecondsPerSecond Y, GC time that does not depend on heap size
   * @param currentHeapBytes the heap limit the measurement was taken under
   * @param liveBytes live bytes after a major or concurrent cycle
   * @param offsetBytes E0
   * @param promotionBytesPerSecond g, if measured
   * @param collectorBytesPerSecond s, live bytes traced per second of GC time, if measured
   */
  public static GcModel estimate(
      double gcSecondsPerSecond,
      double heapIndependentSecondsPerSecond,
      long currentHeapBytes,
      long liveBytes,
      long offsetBytes,
      OptionalDouble promotionBytesPerSecond,
      OptionalDouble collectorBytesPerSecond) {
    double usableBytes = (double) currentHeapBytes - liveBytes - offsetBytes;
    if (usableBytes <= 0) {
      throw new IllegalArgumentException(
          "current heap leaves no headroom above live bytes plus offset, so k cannot be calibrated");
    }
    // Y is GC time the heap size cannot change; counting it into k would overstate the benefit of
    // extra heap, so only the excess is calibrated. A measured total below Y leaves nothing.
    double heapIndependent = Math.min(heapIndependentSecondsPerSecond, gcSecondsPerSecond);
    double heapDependent = gcSecondsPerSecond - heapIndependent;
    if (heapDependent > 0) {
      return new GcModel(
          heapDependent * usableBytes,
          offsetBytes,
          heapIndependent,
          GcConstantEstimator.CURRENT_HEADROOM);
    }
    if (promotionBytesPerSecond.isPresent()
        && collectorBytesPerSecond.isPresent()
        && collectorBytesPerSecond.getAsDouble() > 0) {
      double k =
          promotionBytesPerSecond.getAsDouble() * liveBytes / collectorBytesPerSecond.getAsDouble();
      return new GcModel(k, offsetBytes, heapIndependent, GcConstantEstimator.PROMOTION_MODEL);
    }
    return new GcModel(0, offsetBytes, heapIndependent, GcConstantEstimator.NO_HEAP_DEPENDENT_GC);
  }
}
