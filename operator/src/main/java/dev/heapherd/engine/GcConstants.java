package dev.heapherd.engine;

/** Estimates a workload's GC cost curve from one observation at one heap limit. */
public final class GcConstants {

  private GcConstants() {}

  /**
   * Calibrates the curve at the observed heap: the young constant is the young GC time rate times
   * today's young capacity; the old constant is the rest of the heap-dependent GC time rate times
   * today's old headroom. When no old-generation time was measured the promotion model gives {@code
   * k} if its inputs exist, else k = 0.
   */
  public static GcModel estimate(GcObservation o) {
    Generations generations = o.generations();
    double heap = o.heapBytes();
    double oldHeadroom = generations.oldShare() * heap - o.liveBytes() - o.offsetBytes();
    if (oldHeadroom <= 0) {
      throw new IllegalArgumentException(
          "the old generation leaves no headroom above live bytes plus offset under the current"
              + " heap, so the GC constant cannot be calibrated");
    }
    // Y is GC time the heap size cannot change; counting it into a constant would overstate the
    // benefit of extra heap, so only the excess is calibrated. A total below Y leaves nothing.
    double steady = Math.min(o.steadyGcSecondsPerSecond(), o.gcSecondsPerSecond());
    double heapDependent = o.gcSecondsPerSecond() - steady;
    double young = Math.min(o.youngGcSecondsPerSecond(), heapDependent);
    double old = heapDependent - young;
    double youngConstant = young * generations.youngShare() * heap;
    if (old > 0) {
      return new GcModel(
          old * oldHeadroom,
          o.offsetBytes(),
          steady,
          youngConstant,
          generations,
          GcConstantEstimator.CURRENT_HEADROOM);
    }
    var promotion = o.promotionBytesPerSecond();
    var speed = o.collectorBytesPerSecond();
    if (promotion.isPresent() && speed.isPresent() && speed.getAsDouble() > 0) {
      double k = promotion.getAsDouble() * o.liveBytes() / speed.getAsDouble();
      return new GcModel(
          k,
          o.offsetBytes(),
          steady,
          youngConstant,
          generations,
          GcConstantEstimator.PROMOTION_MODEL);
    }
    return new GcModel(
        0,
        o.offsetBytes(),
        steady,
        youngConstant,
        generations,
        youngConstant > 0
            ? GcConstantEstimator.YOUNG_ONLY
            : GcConstantEstimator.NO_HEAP_DEPENDENT_GC);
  }
}
