package dev.heapherd.engine;

/** Which constraint decided a workload's heap. */
public enum Bound {
  /** The optimum itself, inside all bounds. */
  NONE("none"),
  /** A safety floor: absolute minimum heap, minimum headroom over live, or the offset. */
  FLOOR("floor"),
  /** The absolute maximum heap. */
  CEILING("ceiling"),
  /** The limit on change per step relative to the current heap. */
  STEP("step"),
  /**
   * Kept at today's heap: no GC time was measured, or the points of several heaps show none that
   * depends on heap, so nothing predicts what a change would do.
   */
  KEPT("kept-unpredictable"),
  /**
   * Shrunk no further in this step: no old-generation collection was measured, so at most {@link
   * HeapBounds#UNMEASURED_OLD_HEADROOM_GIVEN_UP} of today's old headroom is given up.
   */
  OLD_UNMEASURED("old-unmeasured"),
  /**
   * Under a collector with a fixed young generation (Serial, Parallel) the old generation's free
   * space must hold a whole young generation's promotion, or the collector runs full collections in
   * place of young ones.
   */
  PROMOTION_ROOM("promotion-room");

  private final String label;

  Bound(String label) {
    this.label = label;
  }

  /** Short stable label used in output documents. */
  public String label() {
    return label;
  }
}
