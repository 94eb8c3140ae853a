package dev.heapherd.synthetic;

/**
 * Decides how many bytes to allocate on a tick so that the cumulative amount follows {@code
 * bytesPerSecond} from the start: a late or slow tick leaves a backlog that later ticks make up, so
 * the rate holds on average instead of drifting with scheduling delays.
 */
public record RatePacer(double bytesPerSecond, long maxBytesPerTick) {

  /** Nanoseconds in one second. */
  static final double NANOS_PER_SECOND = 1e9;

  /**
   * How many ticks' worth of bytes one tick may allocate while catching up: enough to recover from
   * a GC pause of a few ticks within a second, bounded so a long stall does not turn into one large
   * burst.
   */
  static final int CATCH_UP_TICKS = 4;

  /** A pacer for {@code bytesPerSecond} on ticks of {@code tickNanos}. */
  public static RatePacer of(double bytesPerSecond, long tickNanos) {
    double bytesPerTick = bytesPerSecond * tickNanos / NANOS_PER_SECOND;
    return new RatePacer(bytesPerSecond, (long) Math.ceil(bytesPerTick * CATCH_UP_TICKS));
  }

  /**
   * Bytes due on a tick {@code elapsedNanos} after the start, given {@code assignedBytes} already
   * handed out by earlier ticks; never negative, at most {@link #maxBytesPerTick}.
   */
  public long bytesDue(long elapsedNanos, long assignedBytes) {
    long targetBytes = (long) (bytesPerSecond * (elapsedNanos / NANOS_PER_SECOND));
    long backlogBytes = targetBytes - assignedBytes;
    return Math.max(0, Math.min(backlogBytes, maxBytesPerTick));
  }
}
