package dev.heapherd.engine;

/** Unit constants and whole-MiB rounding shared by the engine. */
public final class Units {
  /** Binary mebibyte: -Xmx and container limits are written in whole MiB. */
  public static final long MIB = 1024L * 1024L;

  /** Binary gibibyte, the unit memory prices are quoted in. */
  public static final long GIB = 1024L * MIB;

  /**
   * Largest heap the engine proposes or accepts: 16 TiB, the largest heap the JDK's collectors
   * support (ZGC's documented maximum). It also keeps per-pod sums far inside a long.
   */
  public static final long MAX_HEAP_BYTES = 16L << 40;

  /** Seconds in an hour, for GC seconds per hour and prices per hour. */
  public static final double SECONDS_PER_HOUR = 3600.0;

  private Units() {}

  /** Smallest whole MiB at or above {@code bytes}. */
  public static long roundUpToMib(long bytes) {
    return Math.floorDiv(bytes + MIB - 1, MIB) * MIB;
  }

  /**
   * Largest whole MiB at or below {@code bytes}, saturating at the largest whole MiB a long holds.
   */
  public static long roundDownToMib(double bytes) {
    long mebibytes = (long) Math.floor(bytes / MIB);
    return Math.min(mebibytes, Long.MAX_VALUE / MIB) * MIB;
  }
}
