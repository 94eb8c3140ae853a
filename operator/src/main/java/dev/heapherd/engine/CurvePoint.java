package dev.heapherd.engine;

/**
 * One measured point of a workload's GC cost curve: the GC time its pods spent under one heap
 * limit.
 *
 * @param heapBytes the heap limit the pods ran with
 * @param liveBytes live bytes measured at the same time
 * @param youngGcSecondsPerSecond young-collection time per second
 * @param oldGcSecondsPerSecond the rest of the GC time per second
 */
public record CurvePoint(
    long heapBytes, long liveBytes, double youngGcSecondsPerSecond, double oldGcSecondsPerSecond) {

  /** Validates the point. */
  public CurvePoint {
    if (heapBytes <= 0 || liveBytes <= 0 || liveBytes >= heapBytes) {
      throw new IllegalArgumentException("a curve point needs 0 < live < heap");
    }
    if (!(youngGcSecondsPerSecond >= 0 && youngGcSecondsPerSecond <= 1)
        || !(oldGcSecondsPerSecond >= 0 && oldGcSecondsPerSecond <= 1)) {
      throw new IllegalArgumentException("GC seconds per second must be between 0 and 1");
    }
  }
}
