package dev.heapherd.engine;

/**
 * One workload of a pool as the allocator sees it: every pod of it gets the same heap.
 *
 * @param name unique within the pool
 * @param replicas pods that each get the heap (n)
 * @param liveBytes live bytes per pod (L)
 * @param startupLiveBytes the most a pod held after a collection since it started (at least {@code
 *     liveBytes}): loading an index or a table can need more than the steady live set
 * @param currentHeapBytes the heap limit pods run with now
 * @param nonHeapBytes memory a pod uses beyond its heap (O): metaspace, code cache, stacks, buffers
 * @param weight importance of this workload's GC time (w, default 1)
 * @param gc the cost curve
 * @param rules bounds and margin
 */
public record Workload(
    String name,
    int replicas,
    long liveBytes,
    long startupLiveBytes,
    long currentHeapBytes,
    long nonHeapBytes,
    double weight,
    GcModel gc,
    HeapRules rules) {

  /** Validates the inputs. */
  public Workload {
    if (replicas < 1) {
      throw new IllegalArgumentException(name + ": replicas must be >= 1");
    }
    if (liveBytes <= 0 || currentHeapBytes <= 0 || nonHeapBytes < 0) {
      throw new IllegalArgumentException(name + ": sizes must be positive");
    }
    startupLiveBytes = Math.max(startupLiveBytes, liveBytes);
    if (!(weight > 0) || Double.isInfinite(weight)) {
      throw new IllegalArgumentException(name + ": weight must be finite and > 0");
    }
  }

  /** Container bytes a pod needs on top of its heap: non-heap plus margin, whole MiB. */
  public long podOverheadBytes() {
    return Units.roundUpToMib(nonHeapBytes + rules.marginBytes());
  }

  /**
   * {@code sqrt(w * k / oldShare)}: how strongly the old part pulls on spare memory; with the whole
   * heap for old objects it is the published rule's {@code sqrt(w * k)}.
   */
  public double oldPull() {
    return Math.sqrt(weight * gc.constantBytes() / gc.generations().oldShare());
  }

  /** {@code sqrt(w * a / youngShare)}: how strongly the young part pulls on heap. */
  public double youngPull() {
    return Math.sqrt(weight * gc.youngConstantBytes() / gc.generations().youngShare());
  }

  /** Predicted GC seconds per hour over all replicas at the given per-pod heap. */
  public double gcSecondsPerHour(double heapBytes) {
    return replicas * gc.gcFraction(heapBytes, liveBytes) * Units.SECONDS_PER_HOUR;
  }
}
