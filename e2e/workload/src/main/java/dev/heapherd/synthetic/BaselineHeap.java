package dev.heapherd.synthetic;

import java.lang.management.ManagementFactory;

/**
 * Live heap of the JVM before the workload builds its live set: what the runtime, the metrics
 * library or agent and the HTTP server keep alive. A metrics estimate of live bytes sees this too.
 */
final class BaselineHeap {

  private BaselineHeap() {}

  /** Heap in use right after a requested full collection. */
  static long measure() {
    // An explicit collection is the only portable way to ask the JVM for its live heap.
    System.gc();
    return ManagementFactory.getMemoryMXBean().getHeapMemoryUsage().getUsed();
  }
}
