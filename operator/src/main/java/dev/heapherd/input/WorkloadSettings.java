package dev.heapherd.input;

import dev.heapherd.engine.HeapRules;
import dev.heapherd.engine.Units;

/**
 * Per-workload settings of a pool: its defaults or one workload's overrides. Null means "not set
 * here": overrides fall back to the pool's defaults, which fall back to {@link #BUILT_IN}.
 *
 * @param weight importance of the workload's GC time
 * @param heapFloorBytes absolute minimum heap
 * @param heapCeilingBytes absolute maximum heap
 * @param minHeadroomPercent heap is kept at least this percent above live bytes
 * @param maxStepPercent at most this percent of the current heap changes in one step
 * @param limitMarginBytes extra container memory above heap and non-heap
 */
public record WorkloadSettings(
    Long weight,
    Long heapFloorBytes,
    Long heapCeilingBytes,
    Long minHeadroomPercent,
    Long maxStepPercent,
    Long limitMarginBytes) {

  /**
   * Our defaults. Headroom 25 percent: a common-practice rule of thumb that keeps the live set at
   * most four fifths of the heap. Step 50 percent: our choice, so a wrong estimate is caught after
   * a bounded change. Margin 64 MiB: our choice, for native memory the non-heap high-water mark
   * missed. Floor 64 MiB: our choice, below which JVM services rarely start usefully.
   */
  public static final WorkloadSettings BUILT_IN =
      new WorkloadSettings(1L, 64 * Units.MIB, null, 25L, 50L, 64 * Units.MIB);

  /** Settings where this one's unset fields come from {@code fallback}. */
  public WorkloadSettings over(WorkloadSettings fallback) {
    return new WorkloadSettings(
        weight != null ? weight : fallback.weight,
        heapFloorBytes != null ? heapFloorBytes : fallback.heapFloorBytes,
        heapCeilingBytes != null ? heapCeilingBytes : fallback.heapCeilingBytes,
        minHeadroomPercent != null ? minHeadroomPercent : fallback.minHeadroomPercent,
        maxStepPercent != null ? maxStepPercent : fallback.maxStepPercent,
        limitMarginBytes != null ? limitMarginBytes : fallback.limitMarginBytes);
  }

  /** The engine's rules; call on settings already laid over {@link #BUILT_IN}. */
  public HeapRules toRules() {
    return new HeapRules(
        heapFloorBytes,
        heapCeilingBytes == null ? Long.MAX_VALUE : heapCeilingBytes,
        minHeadroomPercent / 100.0,
        maxStepPercent / 100.0,
        limitMarginBytes);
  }
}
