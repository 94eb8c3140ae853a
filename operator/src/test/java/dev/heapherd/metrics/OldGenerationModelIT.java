package dev.heapherd.metrics;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;
import static org.awaitility.Awaitility.await;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import org.junit.jupiter.api.Test;

/**
 * Checks the published model's premise on a real JVM: with a fixed heap, old-generation collections
 * come every {@code E / g} seconds, where {@code E} is the old generation's capacity minus live
 * bytes and {@code g} the promotion rate ("Optimal Heap Limits for Reducing Browser Memory Use",
 * OOPSLA 2022). The counts come from the JDK's GarbageCollectorMXBean.
 */
class OldGenerationModelIT {

  /** The model's prediction holds within 30 percent (the bound). */
  private static final double TOLERANCE = 0.30;

  /** Old collections to observe: enough that one more or less moves the rate by under 15%. */
  private static final int OLD_COLLECTIONS = 7;

  /** Serial's old-generation collector, as HotSpot names its GarbageCollectorMXBean. */
  private static final String SERIAL_OLD = "MarkSweepCompact";

  /** Serial's old pool, as HotSpot names its MemoryPoolMXBean. */
  private static final String SERIAL_OLD_POOL = "Tenured Gen";

  @Test
  void oldCollectionFrequencyFollowsPromotionOverFreeOldSpace() throws Exception {
    Path dir = Files.createTempDirectory("model");
    // -Xms equal to -Xmx (set below through the spec) fixes the old generation's size.
    try (WorkloadProcess jvm =
        WorkloadProcess.start(
            new WorkloadProcess.Spec("micrometer", "-XX:+UseSerialGC", 256, 64, 16, 8),
            dir,
            "model",
            "-Xms256m")) {
      await().atMost(Duration.ofSeconds(60)).until(() -> oldCount(jvm.truth()) >= 1);
      JsonNode first = jvm.truth();
      await()
          .atMost(Duration.ofSeconds(180))
          .pollInterval(Duration.ofMillis(200))
          .until(() -> oldCount(jvm.truth()) >= oldCount(first) + OLD_COLLECTIONS);
      JsonNode last = jvm.truth();

      double seconds =
          (last.path("uptimeMillis").asLong() - first.path("uptimeMillis").asLong()) / 1000.0;
      double measured = (oldCount(last) - oldCount(first)) / seconds;
      double promotion =
          (last.path("replacedBytesTotal").asDouble() - first.path("replacedBytesTotal").asDouble())
              / seconds;
      double capacity = last.path("heapPools").path(SERIAL_OLD_POOL).path("maxBytes").asDouble();
      double live = last.path("heldBytes").asDouble() + last.path("baselineLiveBytes").asDouble();
      double predicted = promotion / (capacity - live);
      assertThat(measured).isCloseTo(predicted, within(predicted * TOLERANCE));
    }
  }

  private static long oldCount(JsonNode truth) {
    return truth.path("collectors").path(SERIAL_OLD).path("collectionCount").asLong();
  }
}
