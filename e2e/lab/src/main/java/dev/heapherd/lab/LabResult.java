package dev.heapherd.lab;

import java.util.List;

/** What {@code run} writes: the settings of the run and the measured GC time per service. */
public record LabResult(
    String collector,
    String measuredFrom,
    String measuredTo,
    long warmupSeconds,
    long measureSeconds,
    double sizeScale,
    String prometheus,
    List<App> apps,
    Pool pool) {

  /** One service's heap and what it did in the measure window. */
  public record App(
      String app,
      String namespace,
      String pod,
      String heap,
      long heapBytes,
      double gcSecondsPerSecond,
      double gcPauseSecondsPerSecond,
      double gcConcurrentSecondsPerSecond,
      double achievedOpsPerSecond,
      double targetOpsPerSecond,
      double droppedOpsPerSecond,
      double processCpuCores,
      long liveSetBytesAtLoad,
      boolean runningAtEnd) {}

  /** Sums over the services. */
  public record Pool(
      long heapBytes,
      double gcSecondsPerSecond,
      double achievedOpsPerSecond,
      double targetOpsPerSecond) {}
}
