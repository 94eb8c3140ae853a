package dev.heapherd.input;

import dev.heapherd.engine.CurvePoint;
import java.nio.file.Path;
import java.time.Instant;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.OptionalLong;
import java.util.Set;

/** Reads and validates a metrics snapshot file. */
public final class SnapshotReader {

  /** Workload kinds a pool manages. */
  public static final Set<String> KINDS = Set.of("Deployment", "StatefulSet");

  /** Collectors of HotSpot-based JVMs that the model covers. */
  public static final Set<String> COLLECTORS =
      Set.of("Serial", "Parallel", "G1", "ZGC", "Shenandoah");

  /** Upper bound on replicas, the largest a Deployment's int32 field can say. */
  static final long MAX_REPLICAS = Integer.MAX_VALUE;

  /** Upper bound on a window: one year, far beyond any sensible metrics window. */
  static final long MAX_WINDOW_SECONDS = 366L * 24 * 3600;

  /** A collector tracing less than a byte per second is a unit mistake, not a measurement. */
  static final double MIN_COLLECTOR_BYTES_PER_SECOND = 1;

  private static final Set<String> WORKLOAD_FIELDS = SnapshotFile.fields(SnapshotFile.Entry.class);

  /** Confidence levels a snapshot may state. */
  public static final Set<String> CONFIDENCE = Set.of("High", "Medium", "Low");

  private SnapshotReader() {}

  /** Reads {@code file}; every problem is reported as an {@link InputException}. */
  public static Snapshot read(Path file) throws InputException {
    Field root = Documents.read(file).allowOnly(SnapshotFile.fields(SnapshotFile.class));
    Field capturedField = root.required("capturedAt");
    Instant capturedAt;
    try {
      capturedAt = Instant.parse(capturedField.text());
    } catch (DateTimeParseException e) {
      throw capturedField.error("must be a UTC timestamp such as 2026-11-30T09:00:00Z");
    }
    long windowSeconds = root.required("windowSeconds").integer(1, MAX_WINDOW_SECONDS);
    List<Snapshot.Workload> workloads = new ArrayList<>();
    Set<String> names = new HashSet<>();
    for (Field item : root.required("workloads").list()) {
      Snapshot.Workload w = workload(item.allowOnly(WORKLOAD_FIELDS));
      if (!names.add(w.name())) {
        throw item.required("name").error("duplicate workload name \"" + w.name() + "\"");
      }
      workloads.add(w);
    }
    List<Snapshot.Held> held = new ArrayList<>();
    if (root.optional("held").isPresent()) {
      for (Field item : root.required("held").list()) {
        item.allowOnly(SnapshotFile.fields(SnapshotFile.Held.class));
        String name = item.required("name").objectName();
        if (!names.add(name)) {
          throw item.required("name").error("duplicate workload name \"" + name + "\"");
        }
        Long memory = item.nonNegativeBytesOrNull("memoryBytes");
        held.add(
            new Snapshot.Held(name, item.required("reason").text(), memory == null ? 0 : memory));
      }
    }
    if (workloads.isEmpty() && held.isEmpty()) {
      throw root.required("workloads").error("must list at least one workload");
    }
    return new Snapshot(capturedAt, windowSeconds, workloads, held);
  }

  private static Snapshot.Workload workload(Field f) throws InputException {
    long heap = f.required("heapMaxBytes").positiveBytes();
    long live = f.required("liveBytes").positiveBytes();
    if (live >= heap) {
      throw f.required("liveBytes")
          .error(
              "live bytes "
                  + Quantity.format(live)
                  + " are not below the current heap "
                  + Quantity.format(heap));
    }
    Long offsetOrNull = f.nonNegativeBytesOrNull("offsetBytes");
    long offset = offsetOrNull == null ? 0 : offsetOrNull;
    if (live + offset >= heap) {
      throw f.required("offsetBytes")
          .error("live bytes plus offset leave no headroom under the current heap");
    }
    double gc = f.required("gcSecondsPerSecond").shareOfTime();
    double young = f.optionalNonNegativeNumber("youngGcSecondsPerSecond").orElse(0);
    if (young > gc) {
      throw f.required("youngGcSecondsPerSecond")
          .error("is above gcSecondsPerSecond: the young part cannot exceed the total");
    }
    double steady = f.optionalNonNegativeNumber("steadyGcSecondsPerSecond").orElse(0);
    if (steady > gc) {
      throw f.required("steadyGcSecondsPerSecond")
          .error("is above gcSecondsPerSecond: the heap-independent part cannot exceed the total");
    }
    OptionalLong youngCapacity = capacity(f, "youngCapacityBytes", heap);
    OptionalLong oldCapacity = capacity(f, "oldCapacityBytes", heap);
    if (oldCapacity.isPresent() && oldCapacity.getAsLong() <= live + offset) {
      throw f.required("oldCapacityBytes")
          .error("does not hold the live bytes plus offset: the old generation would thrash");
    }
    Long startup = f.positiveBytesOrNull("startupLiveBytes");
    if (startup != null && startup < live) {
      throw f.required("startupLiveBytes")
          .error("is below liveBytes: it is the most held since start");
    }
    var collectorSpeed = f.optionalNonNegativeNumber("collectorBytesPerSecond");
    if (collectorSpeed.isPresent()
        && collectorSpeed.getAsDouble() < MIN_COLLECTOR_BYTES_PER_SECOND) {
      throw f.required("collectorBytesPerSecond").error("must be at least 1 byte per second");
    }
    return new Snapshot.Workload(
        f.required("name").objectName(),
        f.required("kind").oneOf(KINDS),
        (int) f.required("replicas").integer(1, MAX_REPLICAS),
        f.required("collector").oneOf(COLLECTORS),
        heap,
        live,
        gc,
        young,
        offset,
        f.optionalNonNegativeNumber("promotionBytesPerSecond"),
        collectorSpeed,
        f.required("nonHeapBytes").nonNegativeBytes(),
        evidence(f),
        new Snapshot.Layout(
            youngCapacity,
            oldCapacity,
            startup == null ? OptionalLong.empty() : OptionalLong.of(startup),
            f.optionalNonNegativeNumber("allocationBytesPerSecond"),
            steady,
            history(f)));
  }

  /** Earlier points of the curve: each a heap with the GC times measured under it. */
  private static List<CurvePoint> history(Field f) throws InputException {
    List<CurvePoint> points = new ArrayList<>();
    if (f.optional("history").isEmpty()) {
      return points;
    }
    for (Field item : f.required("history").list()) {
      item.allowOnly(SnapshotFile.fields(CurvePoint.class));
      long heap = item.required("heapBytes").positiveBytes();
      long live = item.required("liveBytes").positiveBytes();
      if (live >= heap) {
        throw item.required("liveBytes").error("is not below heapBytes");
      }
      points.add(
          new CurvePoint(
              heap,
              live,
              fraction(item, "youngGcSecondsPerSecond"),
              fraction(item, "oldGcSecondsPerSecond")));
    }
    return points;
  }

  /** A share of each second: between 0 and 1. */
  private static double fraction(Field f, String name) throws InputException {
    double value = f.required(name).nonNegativeNumber();
    if (value > 1) {
      throw f.required(name).error("is above 1: more than a whole second of GC per second");
    }
    return value;
  }

  /** A generation's capacity: positive and at most the heap. */
  private static OptionalLong capacity(Field f, String name, long heapBytes) throws InputException {
    Long bytes = f.positiveBytesOrNull(name);
    if (bytes == null) {
      return OptionalLong.empty();
    }
    if (bytes > heapBytes) {
      throw f.required(name).error("is above heapMaxBytes: a generation is part of the heap");
    }
    return OptionalLong.of(bytes);
  }

  private static Snapshot.Evidence evidence(Field f) throws InputException {
    Long samples = f.integerOrNull("sampleCount", 0, Long.MAX_VALUE);
    List<String> notes = new ArrayList<>();
    if (f.optional("notes").isPresent()) {
      for (Field note : f.required("notes").list()) {
        notes.add(note.text());
      }
    }
    return new Snapshot.Evidence(
        samples == null ? 0 : samples, f.oneOfOrDefault("confidence", CONFIDENCE, ""), notes);
  }
}
