package dev.heapherd.synthetic;

import java.util.List;
import java.util.Map;

/**
 * What the workload knows about itself, served as JSON on /truth: the configured and actual live
 * set and allocation, and the JDK's own GC and memory totals, which tests use as the reference that
 * scraped metrics are checked against.
 */
public record Truth(
    long pid,
    long uptimeMillis,
    String instrumentation,
    boolean ready,
    long configuredLiveBytes,
    long heldBytes,
    long baselineLiveBytes,
    long heldPayloadBytes,
    long heldArrays,
    double configuredReplaceBytesPerSecond,
    double configuredGarbageBytesPerSecond,
    long replacedBytesTotal,
    long garbageBytesTotal,
    double allocatingSeconds,
    long maxHeapBytes,
    long maxHeapSizeOptionBytes,
    List<String> collectorNames,
    Map<String, CollectorTotals> collectors,
    Map<String, HeapPoolUsage> heapPools,
    long residentSetBytes) {

  /** One GarbageCollectorMXBean's totals since the JVM started. */
  public record CollectorTotals(long collectionCount, long collectionTimeMillis) {}

  /**
   * One heap MemoryPoolMXBean: current use, and use right after its last collection ({@code -1}
   * when the pool reports none); {@code maxBytes} is {@code -1} when undefined.
   */
  public record HeapPoolUsage(
      long usedBytes, long committedBytes, long maxBytes, long usedAfterLastGcBytes) {}
}
