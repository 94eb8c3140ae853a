package dev.heapherd.engine;

/**
 * The bounds an operator sets on one workload's heap and container.
 *
 * @param minHeapBytes absolute heap floor (0 for none)
 * @param maxHeapBytes absolute heap ceiling ({@link Long#MAX_VALUE} for none)
 * @param minHeadroomFraction heap must be at least {@code live * (1 + this)}
 * @param maxStepFraction at most this fraction of the current heap changes in one step (>= 1 for no
 *     step limit on growth; shrink is then limited to the whole heap)
 * @param marginBytes safety margin added to heap and non-heap in the container limit
 */
public record HeapRules(
    long minHeapBytes,
    long maxHeapBytes,
    double minHeadroomFraction,
    double maxStepFraction,
    long marginBytes) {

  /** Validates the rules. */
  public HeapRules {
    if (minHeapBytes < 0 || maxHeapBytes <= 0) {
      throw new IllegalArgumentException("heap floor must be >= 0 and ceiling > 0");
    }
    if (!(minHeadroomFraction >= 0) || !(maxStepFraction > 0)) {
      throw new IllegalArgumentException("headroom fraction must be >= 0 and step fraction > 0");
    }
    if (marginBytes < 0) {
      throw new IllegalArgumentException("margin must be >= 0");
    }
  }

  /** Rules with no absolute bounds, no step limit and no margin: the pure model, for tests. */
  public static HeapRules unbounded() {
    return new HeapRules(0, Long.MAX_VALUE, 0, Double.POSITIVE_INFINITY, 0);
  }
}
