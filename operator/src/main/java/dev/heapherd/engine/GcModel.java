package dev.heapherd.engine;

/**
 * Per-pod GC cost curve of one workload: {@code cost(E) = Y + k / (E - E0)} GC seconds per second,
 * where {@code E} is heap headroom (heap minus live bytes).
 *
 * @param constantBytes k, the heap-dependent GC cost constant (fraction of time x bytes)
 * @param offsetBytes E0 >= 0, the headroom below which the collector thrashes; 0 is the published
 *     square-root rule
 * @param heapIndependentFraction Y >= 0, GC seconds per second that do not depend on heap size
 *     (young collections); it never moves the optimum
 * @param estimator which estimator produced {@code constantBytes}
 */
public record GcModel(
    double constantBytes,
    long offsetBytes,
    double heapIndependentFraction,
    GcConstantEstimator estimator) {

  /** Validates the curve's parameters. */
  public GcModel {
    if (!(constantBytes >= 0) || Double.isInfinite(constantBytes)) {
      throw new IllegalArgumentException("GC constant must be finite and >= 0: " + constantBytes);
    }
    if (offsetBytes < 0) {
      throw new IllegalArgumentException("offset must be >= 0: " + offsetBytes);
    }
    if (!(heapIndependentFraction >= 0) || Double.isInfinite(heapIndependentFraction)) {
      throw new IllegalArgumentException(
          "heap-independent GC fraction must be finite and >= 0: " + heapIndependentFraction);
    }
  }

  /**
   * GC seconds per second of one pod whose heap leaves {@code extraBytes} of headroom over live.
   */
  public double gcFraction(double extraBytes) {
    double usable = extraBytes - offsetBytes;
    if (usable <= 0) {
      return Double.POSITIVE_INFINITY;
    }
    return heapIndependentFraction + constantBytes / usable;
  }

  /** The part of {@link #gcFraction} that depends on heap size, which the allocator minimises. */
  public double heapDependentFraction(double extraBytes) {
    double usable = extraBytes - offsetBytes;
    return usable <= 0 ? Double.POSITIVE_INFINITY : constantBytes / usable;
  }
}
