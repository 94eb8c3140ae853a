package dev.heapherd.metrics;

import java.util.Locale;
import java.util.Optional;
import java.util.Set;

/**
 * Old-generation GC time of Serial and Parallel from the pace of its collections rather than their
 * count in the window.
 *
 * <p>Under these collectors an old collection comes when promotion has filled the room between the
 * live set and the old generation's capacity (both documented in the HotSpot GC tuning guide), so
 * collections per second are {@code promotion / (old capacity - live)}, and their time is that
 * times the mean pause. A window of a minute holds one or two old collections of a service paced at
 * tens of seconds, and one more or less moves the counted figure by half or double; promotion and
 * the mean pause are steady over the same minute.
 *
 * @param meanPauseSeconds mean old-collection pause in the window (time over count)
 * @param promotionBytesPerSecond bytes promoted into the old generation per second
 * @param roomBytes old-generation capacity above the live set
 * @param countedSecondsPerSecond old GC time as counted in the window
 */
record OldCollectionPace(
    double meanPauseSeconds,
    double promotionBytesPerSecond,
    double roomBytes,
    double countedSecondsPerSecond) {

  /** Collectors whose old collections are stop-the-world and paced by promotion alone. */
  static final Set<String> PACED_COLLECTORS = Set.of("Serial", "Parallel");

  private static final double MIB = 1024 * 1024;

  /**
   * The pace of one workload's old collections, when the collector is paced and every input was
   * measured: at least one old collection in the window, promotion, and room above the live set.
   */
  static Optional<OldCollectionPace> of(
      String collector,
      double oldGcSecondsPerSecond,
      double oldCollectionsPerSecond,
      double promotionBytesPerSecond,
      double oldCapacityBytes,
      double liveBytes) {
    double roomBytes = oldCapacityBytes - liveBytes;
    if (!PACED_COLLECTORS.contains(collector)
        || !(oldGcSecondsPerSecond > 0)
        || !(oldCollectionsPerSecond > 0)
        || !(promotionBytesPerSecond > 0)
        || !(roomBytes > 0)) {
      return Optional.empty();
    }
    return Optional.of(
        new OldCollectionPace(
            oldGcSecondsPerSecond / oldCollectionsPerSecond,
            promotionBytesPerSecond,
            roomBytes,
            oldGcSecondsPerSecond));
  }

  /** Old collections per second at the measured promotion pace. */
  double collectionsPerSecond() {
    return promotionBytesPerSecond / roomBytes;
  }

  /** Old GC time per second at the measured pace. */
  double secondsPerSecond() {
    return meanPauseSeconds * collectionsPerSecond();
  }

  /** Says how the figure was made and what the count alone would have said. */
  String note() {
    return String.format(
        Locale.ROOT,
        "old-generation GC time %.4f s/s from its pace: a %.0f ms collection every %.0f s"
            + " (%.1f MiB/s promoted into %.0f MiB of room above the live set); counted in the"
            + " window %.4f s/s",
        secondsPerSecond(),
        1000 * meanPauseSeconds,
        1 / collectionsPerSecond(),
        promotionBytesPerSecond / MIB,
        roomBytes / MIB,
        countedSecondsPerSecond);
  }
}
