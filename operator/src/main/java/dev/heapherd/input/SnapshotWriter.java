package dev.heapherd.input;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.dataformat.yaml.YAMLGenerator;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
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

  private SnapshotWriter() {}

  /** The snapshot as YAML; {@code source} says where it was measured (may be empty). */
  public static String write(Snapshot snapshot, String source) {
    List<SnapshotFile.Entry> entries =
        snapshot.workloads().stream()
            .map(
                w ->
                    new SnapshotFile.Entry(
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
          new SnapshotFile(
              snapshot.capturedAt().toString(),
              snapshot.windowSeconds(),
              source,
              entries,
              snapshot.held().stream()
                  .map(
                      h ->
                          new SnapshotFile.Held(
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
