package dev.heapherd.input;

import com.fasterxml.jackson.annotation.JsonInclude;
import dev.heapherd.engine.CurvePoint;
import java.lang.reflect.RecordComponent;
import java.util.Arrays;
import java.util.List;
import java.util.Set;
import java.util.stream.Collectors;

/**
 * The snapshot file's shape, declared once: {@link SnapshotWriter} writes these records and {@link
 * SnapshotReader} accepts exactly their fields. Field order is the order written.
 */
@JsonInclude(JsonInclude.Include.NON_EMPTY)
record SnapshotFile(
    String capturedAt,
    long windowSeconds,
    String source,
    // Written even when empty (every workload held): the reader requires the key.
    @JsonInclude(JsonInclude.Include.ALWAYS) List<Entry> workloads,
    List<Held> held) {

  /** One held workload; an unknown memory figure is left out. */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  record Held(String name, String reason, Long memoryBytes) {}

  /** One workload; absent optional values are left out. */
  @JsonInclude(JsonInclude.Include.NON_EMPTY)
  record Entry(
      String name,
      String kind,
      int replicas,
      String collector,
      long heapMaxBytes,
      long liveBytes,
      double gcSecondsPerSecond,
      double youngGcSecondsPerSecond,
      long offsetBytes,
      Double promotionBytesPerSecond,
      Double collectorBytesPerSecond,
      long nonHeapBytes,
      Long youngCapacityBytes,
      Long oldCapacityBytes,
      Long startupLiveBytes,
      Double allocationBytesPerSecond,
      Double steadyGcSecondsPerSecond,
      List<CurvePoint> history,
      Long sampleCount,
      String confidence,
      List<String> notes) {}

  /** The field names of one part of the file: its record's components. */
  static Set<String> fields(Class<? extends Record> part) {
    return Arrays.stream(part.getRecordComponents())
        .map(RecordComponent::getName)
        .collect(Collectors.toUnmodifiableSet());
  }
}
