package dev.heapherd.engine;

import java.util.Optional;
import java.util.OptionalLong;

/**
 * How a workload's heap splits between the young and the old generation, as fractions of the heap
 * limit, and whether each fraction was measured or taken from the collector's documented default.
 *
 * @param youngShare young-generation capacity per byte of heap limit, in (0, 1]
 * @param youngShareMeasured true when read from the JVM's young pools, false when assumed
 * @param oldShare the part of the heap limit old objects may occupy, in (0, 1]
 * @param oldShareMeasured true when read from the JVM's old pool maximum, false when assumed
 */
public record Generations(
    double youngShare, boolean youngShareMeasured, double oldShare, boolean oldShareMeasured) {

  /**
   * Serial and Parallel split the heap once at start: {@code -XX:NewRatio=2} by default, so the
   * young generation is one third of the heap and the old two thirds (HotSpot's documented default,
   * Java SE GC tuning guide, "Sizing the Generations").
   */
  static final double NEW_RATIO_DEFAULT_YOUNG_SHARE = 1.0 / 3;

  /**
   * G1 sizes the young generation adaptively between G1NewSizePercent (5) and G1MaxNewSizePercent
   * (60) of the heap (HotSpot's documented defaults); with nothing measured the upper end is
   * assumed. The value only labels the young part: calibrated at today's heap, the young cost
   * scales with heap whatever share is assumed.
   */
  static final double G1_MAX_NEW_SIZE_SHARE = 0.60;

  /** Smallest share accepted as a measurement: below G1NewSizePercent (5) it is a scrape gap. */
  static final double MIN_MEASURED_SHARE = 0.05;

  /**
   * Slack on {@code youngShare + oldShare <= 1}: pool maxima are rounded to the collector's
   * alignment, so a split heap's shares can sum a little above one. Our choice; G1's sum is at
   * least 1.05 (old share 1 plus G1NewSizePercent).
   */
  static final double DISJOINT_TOLERANCE = 0.01;

  /** Validates the shares. */
  public Generations {
    if (!(youngShare > 0 && youngShare <= 1) || !(oldShare > 0 && oldShare <= 1)) {
      throw new IllegalArgumentException(
          "generation shares must be in (0, 1]: young " + youngShare + ", old " + oldShare);
    }
  }

  /** The whole heap for old objects and for allocation: the published rule's single space. */
  public static final Generations SINGLE_SPACE = new Generations(1, false, 1, false);

  /**
   * The split of {@code heapBytes} for {@code collector}: measured capacities where given, else the
   * collector's documented default. G1, ZGC and Shenandoah let old objects use the whole heap (G1
   * Old Gen's pool maximum is the heap limit; ZGC and Shenandoah have one space).
   */
  public static Generations of(
      String collector,
      long heapBytes,
      OptionalLong youngCapacityBytes,
      OptionalLong oldCapacityBytes) {
    Optional<Double> young = share(youngCapacityBytes, heapBytes);
    Optional<Double> old = share(oldCapacityBytes, heapBytes);
    boolean splitAtStart = collector.equals("Serial") || collector.equals("Parallel");
    double youngDefault =
        splitAtStart
            ? NEW_RATIO_DEFAULT_YOUNG_SHARE
            : collector.equals("G1") ? G1_MAX_NEW_SIZE_SHARE : 1;
    double oldDefault = splitAtStart ? 1 - NEW_RATIO_DEFAULT_YOUNG_SHARE : 1;
    return new Generations(
        young.orElse(youngDefault), young.isPresent(), old.orElse(oldDefault), old.isPresent());
  }

  /**
   * True when young and old objects live in separate fixed spaces (Serial, Parallel): a young
   * collection can then promote only into the old generation's free space.
   */
  public boolean disjoint() {
    return youngShare + oldShare <= 1 + DISJOINT_TOLERANCE;
  }

  private static Optional<Double> share(OptionalLong capacityBytes, long heapBytes) {
    if (capacityBytes.isEmpty() || heapBytes <= 0) {
      return Optional.empty();
    }
    double share = Math.min(1, (double) capacityBytes.getAsLong() / heapBytes);
    return share >= MIN_MEASURED_SHARE ? Optional.of(share) : Optional.empty();
  }
}
