package dev.heapherd.engine;

/**
 * Per-pod GC cost curve of one workload over its heap limit {@code H}, in GC seconds per second:
 *
 * <pre>cost(H) = Y + a / (youngShare * H) + k / (oldShare * H - L - E0)</pre>
 *
 * The young part: a young collection runs each time the young generation fills, so its frequency
 * falls as the young generation, a share of the heap, grows. The old part is the square-root rule's
 * term on the old generation's headroom over live bytes {@code L}. With {@code a = 0} and both
 * shares 1 it is the published rule {@code Y + k/(E - E0)} with {@code E = H - L}.
 *
 * @param constantBytes k, the old generation's constant (fraction of time x bytes)
 * @param offsetBytes E0 >= 0, the old headroom below which the collector thrashes
 * @param heapIndependentFraction Y >= 0, GC seconds per second no heap size changes
 * @param youngConstantBytes a, young GC time rate times young capacity (fraction of time x bytes)
 * @param generations how the heap splits between young and old, measured or assumed
 * @param estimator which estimator produced the constants
 */
public record GcModel(
    double constantBytes,
    long offsetBytes,
    double heapIndependentFraction,
    double youngConstantBytes,
    Generations generations,
    GcConstantEstimator estimator) {

  /** Validates the curve's parameters. */
  public GcModel {
    requireFiniteNonNegative(constantBytes, "GC constant");
    requireFiniteNonNegative(heapIndependentFraction, "heap-independent GC fraction");
    requireFiniteNonNegative(youngConstantBytes, "young GC constant");
    if (offsetBytes < 0) {
      throw new IllegalArgumentException("offset must be >= 0: " + offsetBytes);
    }
  }

  /** The published rule's curve: no young part, the whole heap for old objects. */
  public static GcModel oldOnly(
      double constantBytes,
      long offsetBytes,
      double heapIndependentFraction,
      GcConstantEstimator estimator) {
    return new GcModel(
        constantBytes,
        offsetBytes,
        heapIndependentFraction,
        0,
        Generations.SINGLE_SPACE,
        estimator);
  }

  /**
   * GC seconds per second of one pod with {@code liveBytes} live under a {@code heapBytes} limit.
   */
  public double gcFraction(double heapBytes, double liveBytes) {
    double oldHeadroom = oldHeadroomBytes(heapBytes, liveBytes);
    if (oldHeadroom <= 0 || heapBytes <= 0) {
      return Double.POSITIVE_INFINITY;
    }
    return heapIndependentFraction
        + youngConstantBytes / (generations.youngShare() * heapBytes)
        + constantBytes / oldHeadroom;
  }

  /** The part of {@link #gcFraction} that heap size changes: what the allocator minimises. */
  public double heapDependentFraction(double heapBytes, double liveBytes) {
    return gcFraction(heapBytes, liveBytes) - heapIndependentFraction;
  }

  /** Old-generation headroom above live bytes and offset under {@code heapBytes}. */
  public double oldHeadroomBytes(double heapBytes, double liveBytes) {
    return generations.oldShare() * heapBytes - liveBytes - offsetBytes;
  }

  /** Lowest heap whose old generation holds {@code liveBytes} plus the offset. */
  public double thrashingHeapBytes(double liveBytes) {
    return (liveBytes + offsetBytes) / generations.oldShare();
  }

  /** True when neither part depends on heap size: nothing says what a change would do. */
  public boolean flat() {
    return constantBytes == 0 && youngConstantBytes == 0;
  }

  private static void requireFiniteNonNegative(double value, String what) {
    if (!(value >= 0) || Double.isInfinite(value)) {
      throw new IllegalArgumentException(what + " must be finite and >= 0: " + value);
    }
  }
}
