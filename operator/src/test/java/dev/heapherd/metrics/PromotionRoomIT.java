package dev.heapherd.metrics;

import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import dev.heapherd.engine.Bound;
import dev.heapherd.engine.GcConstantEstimator;
import dev.heapherd.engine.GcModel;
import dev.heapherd.engine.Generations;
import dev.heapherd.engine.HeapBounds;
import dev.heapherd.engine.HeapRules;
import dev.heapherd.engine.Workload;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.OptionalLong;
import org.junit.jupiter.api.Test;

/**
 * The promotion-room floor against the real JVM under Parallel: a service that loaded its live set
 * through young collections, run at the floor the headroom rule alone allows, does full collections
 * in place of young ones; at heapherd's floor its steady window is young collections.
 */
class PromotionRoomIT {

  /** Live set the workload builds at start, through young collections as a loading service does. */
  private static final long LIVE_MIB = 96;

  /** Live objects replaced per second: a little promotion, as a steady service has. */
  private static final double REPLACE_MIB_PER_SECOND = 1;

  /** Short-lived garbage: a young collection every second or two at these heaps. */
  private static final double GARBAGE_MIB_PER_SECOND = 60;

  /** The product's default minimum headroom over live (25 %). */
  private static final double MIN_HEADROOM_FRACTION = 0.25;

  /**
   * Time for Parallel's padded promotion average, inflated by the load, to decay: it moves a tenth
   * of the way to each new sample (AdaptiveSizePolicyWeight=10, HotSpot's default, from memory), so
   * twenty-odd young collections.
   */
  private static final Duration WARM_UP = Duration.ofSeconds(45);

  /** The window the collections are counted over. */
  private static final Duration WINDOW = Duration.ofSeconds(30);

  /** Young collections the window must see at the floor: one every few seconds at least. */
  private static final long MIN_YOUNG_AT_FLOOR = 8;

  /**
   * Full collections the window may see at the floor: promotion of 1 MiB/s fills the old
   * generation's free space at most once in the window.
   */
  private static final long MAX_FULL_AT_FLOOR = 2;

  /** HotSpot's names for Parallel's young and full collectors (GarbageCollectorMXBean). */
  private static final String PARALLEL_YOUNG = "PS Scavenge";

  private static final String PARALLEL_FULL = "PS MarkSweep";

  @Test
  void theFloorKeepsParallelOnYoungCollections() throws Exception {
    Generations parallel =
        Generations.of("Parallel", 512 * MIB, OptionalLong.empty(), OptionalLong.empty());
    GcModel gc = new GcModel(MIB, 0, 0, 0, parallel, GcConstantEstimator.CURRENT_HEADROOM);
    HeapRules rules = new HeapRules(0, Long.MAX_VALUE, MIN_HEADROOM_FRACTION, 10, 0);
    long live = LIVE_MIB * MIB;
    Workload service = new Workload("loader", 1, live, live, 512 * MIB, 0, 1, gc, rules);
    HeapBounds bounds = HeapBounds.of(service);
    assertThat(bounds.lowBound()).isEqualTo(Bound.PROMOTION_ROOM);
    long floorMib = bounds.lowBytes() / MIB;
    // The headroom rule alone: old share 2/3 (NewRatio=2), so L * 1.25 / (2/3).
    long headroomOnlyMib =
        (long) Math.ceil(LIVE_MIB * (1 + MIN_HEADROOM_FRACTION) / parallel.oldShare());
    assertThat(floorMib).isGreaterThan(headroomOnlyMib);

    Path dir = Files.createTempDirectory("promotion");
    try (WorkloadProcess atFloor = start(dir, "at-floor", floorMib);
        WorkloadProcess headroomOnly = start(dir, "headroom-only", headroomOnlyMib)) {
      Thread.sleep(WARM_UP.toMillis());
      JsonNode floorBefore = atFloor.truth();
      JsonNode headroomBefore = headroomOnly.truth();
      Thread.sleep(WINDOW.toMillis());
      long floorYoung = count(atFloor.truth(), floorBefore, PARALLEL_YOUNG);
      long floorFull = count(atFloor.truth(), floorBefore, PARALLEL_FULL);
      long headroomYoung = count(headroomOnly.truth(), headroomBefore, PARALLEL_YOUNG);
      long headroomFull = count(headroomOnly.truth(), headroomBefore, PARALLEL_FULL);

      assertThat(headroomFull)
          .as(
              "full collections at the headroom-only floor, %d MiB (young: %d)",
              headroomOnlyMib, headroomYoung)
          .isGreaterThan(headroomYoung);
      assertThat(floorYoung)
          .as("young collections at the floor, %d MiB", floorMib)
          .isGreaterThanOrEqualTo(MIN_YOUNG_AT_FLOOR);
      assertThat(floorFull)
          .as("full collections at the floor, %d MiB", floorMib)
          .isLessThanOrEqualTo(MAX_FULL_AT_FLOOR);
    }
  }

  private static WorkloadProcess start(Path dir, String name, long heapMib) throws Exception {
    return WorkloadProcess.start(
        new WorkloadProcess.Spec(
            "micrometer",
            "-XX:+UseParallelGC",
            heapMib,
            LIVE_MIB,
            REPLACE_MIB_PER_SECOND,
            GARBAGE_MIB_PER_SECOND),
        dir,
        name,
        // A fixed heap, as services are run: the young generation is then a third of it.
        "-Xms" + heapMib + "m");
  }

  private static long count(JsonNode after, JsonNode before, String collector) {
    return after.path("collectors").path(collector).path("collectionCount").asLong()
        - before.path("collectors").path(collector).path("collectionCount").asLong();
  }
}
