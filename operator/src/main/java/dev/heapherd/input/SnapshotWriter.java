package dev.heapherd.input;

import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.dataformat.yaml.YAMLGenerator;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import dev.heapherd.engine.CurvePoint;
import java.util.List;
import java.util.OptionalDouble;
import java.util.OptionalLong;

/** Writes a snapshot in the format {@link SnapshotReader} reads. */
public final class SnapshotWriter {

  private static final YAMLMapper YAML =
      YAMLMapper.builder()
          .disable(YAMLGenerator.Feature.WRITE_DOC_START_MARKER)
          .enable(YAMLGenerator.Feature.MINIMIZE_QUOTES)
          .build();

  /** The file's shape; field order is the order written. */
  @JsonInclude(JsonInclude.Include.NON_EMPTY)
  record File(
      String capturedAt,
      long windowSeconds,
      String source,
      // Written even when empty (every workload held): the reader requires the key.
      @JsonInclude(JsonInclude.Include.ALWAYS) List<Entry> workloads,
      List<HeldEntry> held) {}

  /** One held workload; an unknown memory figure is left out. */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  record HeldEntry(String name, String reason, Long memoryBytes) {}

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

  private SnapshotWriter() {}

  /** The snapshot as YAML; {@code source} says where it was measured (may be empty). */
  public static String write(Snapshot snapshot, String source) {
    List<Entry> entries =
        snapshot.workloads().stream()
            .map(
                w ->
                    new Entry(
                        w.name(),
                        w.kind(),
                        w.replicas(),
                        w.collector(),
                        w.heapMaxBytes(),
                        w.liveBytes(),
                        w.gcSecondsPerSecond(),
                        w.youngGcSecondsPerSecond(),
                        w.offsetBytes(),
                        orNull(w.promotionBytesPerSecond()),
                        orNull(w.collectorBytesPerSecond()),
                        w.nonHeapBytes(),
                        orNull(w.layout().youngCapacityBytes()),
                        orNull(w.layout().oldCapacityBytes()),
                        orNull(w.layout().startupLiveBytes()),
                        orNull(w.layout().allocationBytesPerSecond()),
                        w.layout().steadyGcSecondsPerSecond() > 0
                            ? w.layout().steadyGcSecondsPerSecond()
                            : null,
                        w.layout().history(),
                        w.evidence().sampleCount() > 0 ? w.evidence().sampleCount() : null,
                        w.evidence().confidence(),
                        w.evidence().notes()))
            .toList();
    try {
      return YAML.writeValueAsString(
          new File(
              snapshot.capturedAt().toString(),
              snapshot.windowSeconds(),
              source,
              entries,
              snapshot.held().stream()
                  .map(
                      h ->
                          new HeldEntry(
                              h.name(), h.reason(), h.memoryBytes() > 0 ? h.memoryBytes() : null))
                  .toList()));
    } catch (JsonProcessingException e) {
      // Records of strings and numbers always serialise; reaching here is a defect of ours.
      throw new IllegalStateException(e);
    }
  }

  private static Long orNull(OptionalLong value) {
    return value.isPresent() ? value.getAsLong() : null;
  }

  private static Double orNull(OptionalDouble value) {
    return value.isPresent() ? value.getAsDouble() : null;
  }
}
