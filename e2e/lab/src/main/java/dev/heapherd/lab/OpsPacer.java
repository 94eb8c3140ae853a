package dev.heapherd.lab;

/**
 * Paces operations at a fixed rate from a start time: a late operation leaves a backlog that the
 * next ones make up, but never more than {@link #maxBacklogOps}, so a long GC pause or a slow
 * stretch is dropped rather than replayed as an unbounded burst.
 */
public record OpsPacer(double opsPerSecond, long maxBacklogOps) {

  /** Nanoseconds in one second. */
  static final double NANOS_PER_SECOND = 1e9;

  /**
   * Seconds of backlog the pacer makes up: enough to ride out an ordinary GC pause, short enough
   * that an overloaded service shows up as missed operations instead of a burst later.
   */
  static final double MAX_BACKLOG_SECONDS = 1.0;

  /** What the worker does next: run an operation now, or wait. */
  public record Step(boolean runNow, long waitNanos, long scheduledOps, long droppedOps) {}

  /** A pacer for {@code opsPerSecond} that makes up at most one second of backlog. */
  public static OpsPacer of(double opsPerSecond) {
    if (!(opsPerSecond > 0)) {
      throw new IllegalArgumentException("operations per second must be above 0");
    }
    return new OpsPacer(opsPerSecond, Math.max(1, (long) (opsPerSecond * MAX_BACKLOG_SECONDS)));
  }

  /**
   * The next step at {@code elapsedNanos} after the start when {@code scheduledOps} operation slots
   * are used up. When it says run, {@link Step#scheduledOps} already counts the operation about to
   * run and any slots dropped beyond the backlog bound.
   */
  public Step next(long elapsedNanos, long scheduledOps) {
    long targetOps = (long) (opsPerSecond * (elapsedNanos / NANOS_PER_SECOND));
    long backlogOps = targetOps - scheduledOps;
    if (backlogOps <= 0) {
      long nextSlotNanos = (long) Math.ceil((scheduledOps + 1) * NANOS_PER_SECOND / opsPerSecond);
      return new Step(false, Math.max(1, nextSlotNanos - elapsedNanos), scheduledOps, 0);
    }
    long droppedOps = Math.max(0, backlogOps - maxBacklogOps);
    return new Step(true, 0, scheduledOps + droppedOps + 1, droppedOps);
  }
}
