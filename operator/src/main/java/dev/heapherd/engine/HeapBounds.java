package dev.heapherd.engine;

/**
 * The interval one workload's heap may take in this step, in whole MiB, and what set each end.
 *
 * @param lowBytes lowest allowed heap
 * @param lowBound what set the low end (FLOOR, PROMOTION_ROOM, STEP or OLD_UNMEASURED)
 * @param highBytes highest allowed heap, never below {@code lowBytes}
 * @param highBound what set the high end (CEILING or STEP, or the low end's bound when floors win)
 */
public record HeapBounds(long lowBytes, Bound lowBound, long highBytes, Bound highBound) {

  /**
   * The smallest usable headroom above the offset: with {@code E <= E0} the cost curve is
   * unbounded, so the floor keeps one MiB (the unit heaps are written in) above it.
   */
  static final long MIN_USABLE_HEADROOM_BYTES = Units.MIB;

  /**
   * Share of today's old-generation headroom a heap may give up in one step when no old collection
   * was measured. With no old collection in the window the old term's constant is unknown, not
   * zero: below some headroom the collector thrashes, and one point cannot say where. Halving the
   * headroom at most doubles an old-collection rate too low to show in the window; the next window,
   * at the new heap, measures it. Our choice.
   */
  public static final double UNMEASURED_OLD_HEADROOM_GIVEN_UP = 0.5;

  /**
   * Resolves a workload's rules against its live bytes and current heap. The floors apply to the
   * old generation, which holds live objects: under Serial and Parallel it is only part of the
   * heap. A workload whose curve is flat keeps today's heap: nothing predicts what a change would
   * do. One whose old term is zero (no old collection measured, so common under G1 on JDK 17) keeps
   * half of today's old headroom in this step. Under Serial and Parallel the old generation also
   * keeps room for a young generation's promotion.
   */
  public static HeapBounds of(Workload w) {
    HeapRules rules = w.rules();
    GcModel gc = w.gc();
    double oldShare = gc.generations().oldShare();
    double safeFloor =
        Math.max(
            Math.max(
                (double) rules.minHeapBytes(),
                w.startupLiveBytes() * (1 + rules.minHeadroomFraction()) / oldShare),
            gc.thrashingHeapBytes(w.liveBytes()) + MIN_USABLE_HEADROOM_BYTES / oldShare);
    Bound floorBound = Bound.FLOOR;
    double promotionFloor = promotionRoomFloorBytes(w);
    if (promotionFloor > safeFloor) {
      safeFloor = promotionFloor;
      floorBound = Bound.PROMOTION_ROOM;
    }
    if (gc.flat()) {
      long kept = Math.max(roundUp(safeFloor), Units.roundDownToMib(w.currentHeapBytes()));
      return new HeapBounds(kept, Bound.KEPT, kept, Bound.KEPT);
    }
    double stepFloor = w.currentHeapBytes() * (1 - Math.min(1, rules.maxStepFraction()));
    Bound stepBound = Bound.STEP;
    if (gc.constantBytes() == 0) {
      double oldHeadroom = Math.max(0, oldShare * w.currentHeapBytes() - w.liveBytes());
      double unmeasuredFloor =
          (w.liveBytes() + (1 - UNMEASURED_OLD_HEADROOM_GIVEN_UP) * oldHeadroom) / oldShare;
      if (unmeasuredFloor > stepFloor) {
        stepFloor = unmeasuredFloor;
        stepBound = Bound.OLD_UNMEASURED;
      }
    }
    double stepCeiling = w.currentHeapBytes() * (1 + rules.maxStepFraction());

    long low = roundUp(Math.max(safeFloor, stepFloor));
    Bound lowBound = stepFloor > safeFloor ? stepBound : floorBound;
    double ceiling =
        Math.min(Math.min((double) rules.maxHeapBytes(), Units.MAX_HEAP_BYTES), stepCeiling);
    long high = Units.roundDownToMib(ceiling);
    Bound highBound = stepCeiling < rules.maxHeapBytes() ? Bound.STEP : Bound.CEILING;
    if (high <= low) {
      // Conflicting rules: the floor protects the service, so it wins over any ceiling.
      return new HeapBounds(low, lowBound, low, lowBound);
    }
    return new HeapBounds(low, lowBound, high, highBound);
  }

  /**
   * The smallest heap whose old generation, holding the live set, still has free space for a whole
   * young generation: {@code H >= (L + E0) / (oldShare - youngShare)} (the young generation
   * guarantee of "Memory Management in the Java HotSpot Virtual Machine", Sun Microsystems white
   * paper, 2006). Parallel attempts a young collection only while its promotion estimate, the
   * smaller of a padded average of past promotions and the young generation's occupancy, fits the
   * old generation's free space (HotSpot's PSScavenge, from memory); else it runs a full collection
   * instead, which does not update the average. A start-up load promotes nearly a young generation
   * per collection, so below this heap the average can stay inflated and every collection be a full
   * one. The lab measured that: a routing service with 94 MiB live ran only full collections at 192
   * MiB, young ones at 201 MiB. At this heap the estimate always fits, young collections run and
   * the average decays. Zero when the generations share one space (G1, ZGC, Shenandoah); today's
   * heap when no heap can meet it.
   */
  static double promotionRoomFloorBytes(Workload w) {
    Generations g = w.gc().generations();
    if (!g.disjoint()) {
      return 0;
    }
    double freeShare = g.oldShare() - g.youngShare();
    if (freeShare <= 0) {
      return w.currentHeapBytes();
    }
    return (w.liveBytes() + w.gc().offsetBytes()) / freeShare;
  }

  private static long roundUp(double bytes) {
    return (long) Math.ceil(bytes / Units.MIB) * Units.MIB;
  }
}
