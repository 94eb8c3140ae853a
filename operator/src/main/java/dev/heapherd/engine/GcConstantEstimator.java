package dev.heapherd.engine;

/** Names the estimator that produced a workload's GC constant, so every number can be traced. */
public enum GcConstantEstimator {
  /**
   * {@code k = (measured GC time rate - Y) * (current heap - live - E0)}: calibrated from the heap
   * the workload runs with now.
   */
  CURRENT_HEADROOM("current-headroom"),
  /**
   * {@code k = g * L / s}: promotion rate times live bytes over collector speed, the published
   * model's own terms, used when the measured GC time has no heap-dependent part to calibrate from.
   */
  PROMOTION_MODEL("promotion-model"),
  /**
   * No heap-dependent GC time was measured and no model inputs exist: k = 0, heap stays at floor.
   */
  NO_HEAP_DEPENDENT_GC("no-heap-dependent-gc");

  private final String label;

  GcConstantEstimator(String label) {
    this.label = label;
  }

  /** Short stable label used in output documents. */
  public String label() {
    return label;
  }
}
