package dev.heapherd.engine;

/** Names the estimator that produced a workload's GC constant, so every number can be traced. */
public enum GcConstantEstimator {
  /**
   * {@code k = (measured old GC time rate) * (old capacity now - live - E0)} and {@code a = (young
   * GC time rate) * (young capacity now)}: calibrated from the heap the workload runs with now.
   */
  CURRENT_HEADROOM("current-headroom"),
  /**
   * {@code k = g * L / s}: promotion rate times live bytes over collector speed, the published
   * model's own terms, used when the measured GC time has no heap-dependent part to calibrate from.
   */
  PROMOTION_MODEL("promotion-model"),
  /**
   * Only young collections were measured: the young constant is calibrated from the heap now and
   * the old part is 0 (no old-generation collection in the window).
   */
  YOUNG_ONLY("young-only"),
  /**
   * Constants fitted by bounded least squares to the (heap, GC time) points of earlier rollouts.
   */
  HISTORY_FIT("history-fit"),
  /**
   * No GC time was measured and no model inputs exist: nothing predicts what a change would do, so
   * the heap is kept where it is.
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
