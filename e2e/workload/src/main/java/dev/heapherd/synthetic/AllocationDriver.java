package dev.heapherd.synthetic;

import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.locks.LockSupport;

/**
 * The allocation loop: on a fixed tick it replaces live arrays and allocates garbage, each paced
 * against its own configured rate measured from the loop's start.
 */
final class AllocationDriver implements Runnable {

  /**
   * 100 ticks a second: one tick's allocation stays far below a young generation, and parking a
   * thread a hundred times a second costs well under one percent of a core.
   */
  static final long TICK_NANOS = TimeUnit.MILLISECONDS.toNanos(10);

  private final LiveSet liveSet;
  private final ArrayToucher toucher;
  private final List<SizeClass> classes;
  private final long[] arrayBytes;
  private final RatePacer replacePacer;
  private final RatePacer garbagePacer;
  private final MixBudget replaceBudget;
  private final MixBudget garbageBudget;

  private volatile boolean running = true;
  private volatile boolean started;
  private volatile long startNanos;
  private volatile long replacedBytesTotal;
  private volatile long garbageBytesTotal;
  private volatile OutOfMemoryError failure;

  /**
   * Escapes each garbage array so the JIT cannot prove it unused and remove the allocation; the
   * next array overwrites it, so each dies young.
   */
  @SuppressWarnings("unused")
  private volatile byte[] garbageSink;

  AllocationDriver(
      WorkloadOptions options, LiveSet liveSet, ArrayToucher toucher, HeapLayout layout) {
    this.liveSet = liveSet;
    this.toucher = toucher;
    this.classes = options.objectSizes().classes();
    this.arrayBytes =
        classes.stream().mapToLong(c -> layout.byteArrayBytes(c.payloadBytes())).toArray();
    this.replacePacer = RatePacer.of(options.replaceBytesPerSecond(), TICK_NANOS);
    this.garbagePacer = RatePacer.of(options.garbageBytesPerSecond(), TICK_NANOS);
    this.replaceBudget = new MixBudget(classes, arrayBytes);
    this.garbageBudget = new MixBudget(classes, arrayBytes);
  }

  @Override
  public void run() {
    try {
      loop();
    } catch (OutOfMemoryError e) {
      // The heap cannot hold the live set plus the churn; the main thread reports and exits.
      failure = e;
    }
  }

  private void loop() {
    long start = System.nanoTime();
    startNanos = start;
    started = true;
    long replaceAssignedBytes = 0;
    long garbageAssignedBytes = 0;
    long tick = 0;
    while (running) {
      tick++;
      long deadline = start + tick * TICK_NANOS;
      long now = System.nanoTime();
      while (running && now < deadline) {
        LockSupport.parkNanos(deadline - now);
        now = System.nanoTime();
      }
      // After a stall, skip the missed ticks; the pacers' backlog makes up their bytes.
      tick = Math.max(tick, (now - start) / TICK_NANOS);
      long elapsedNanos = now - start;

      long replaceDue = replacePacer.bytesDue(elapsedNanos, replaceAssignedBytes);
      replaceAssignedBytes += replaceDue;
      replacedBytesTotal += liveSet.replace(replaceBudget.take(replaceDue));

      long garbageDue = garbagePacer.bytesDue(elapsedNanos, garbageAssignedBytes);
      garbageAssignedBytes += garbageDue;
      garbageBytesTotal += makeGarbage(garbageBudget.take(garbageDue));
    }
  }

  /** The error that ended the loop, or null while it runs or after it stopped normally. */
  OutOfMemoryError failure() {
    return failure;
  }

  /** Stops the loop after its current tick. */
  void stop() {
    running = false;
  }

  /** Heap bytes of live arrays replaced so far. */
  long replacedBytesTotal() {
    return replacedBytesTotal;
  }

  /** Heap bytes of short-lived arrays allocated so far. */
  long garbageBytesTotal() {
    return garbageBytesTotal;
  }

  /** Seconds since the loop started, or 0 before it has. */
  double allocatingSeconds() {
    return started ? (System.nanoTime() - startNanos) / RatePacer.NANOS_PER_SECOND : 0;
  }

  private long makeGarbage(int[] counts) {
    long allocatedBytes = 0;
    for (int index = 0; index < counts.length; index++) {
      int payloadBytes = classes.get(index).payloadBytes();
      for (int made = 0; made < counts[index]; made++) {
        garbageSink = toucher.newTouchedArray(payloadBytes);
        allocatedBytes += arrayBytes[index];
      }
    }
    return allocatedBytes;
  }
}
