package dev.heapherd.engine;

import java.util.OptionalDouble;
import java.util.OptionalLong;

/**
 * Builds curves of the published square-root rule for tests: the whole heap for old objects, no
 * young part, and a declared heap-independent GC time Y.
 */
public final class PublishedRule {

  private PublishedRule() {}

  /** Calibrates {@code k} at the current heap, as {@link GcConstants#estimate} does. */
  public static GcModel estimate(
      double gcSecondsPerSecond,
      double heapIndependentSecondsPerSecond,
      long currentHeapBytes,
      long liveBytes,
      long offsetBytes,
      OptionalDouble promotionBytesPerSecond,
      OptionalDouble collectorBytesPerSecond) {
    return GcConstants.estimate(
        new GcObservation(
            "ZGC",
            currentHeapBytes,
            liveBytes,
            offsetBytes,
            gcSecondsPerSecond,
            0,
            heapIndependentSecondsPerSecond,
            OptionalLong.empty(),
            OptionalLong.empty(),
            promotionBytesPerSecond,
            collectorBytesPerSecond));
  }
}
