package dev.heapherd.lab;

import java.io.PrintStream;
import java.util.concurrent.locks.LockSupport;

/**
 * Runs a service's operations on one thread at the pacer's rate until stopped, counting completed,
 * dropped and failed operations. An OutOfMemoryError ends the loop: the service is then broken and
 * its process should exit so the runner sees it.
 */
final class PacedWorker implements Runnable {

  /** Failures printed in full; later ones are only counted, so a broken op cannot flood stderr. */
  static final int PRINTED_FAILURES = 3;

  private final LabApp app;
  private final OpsPacer pacer;
  private final LabMetrics metrics;
  private final PrintStream err;
  private volatile boolean stopped;
  private volatile Throwable fatal;
  private int failures;

  PacedWorker(LabApp app, OpsPacer pacer, LabMetrics metrics, PrintStream err) {
    this.app = app;
    this.pacer = pacer;
    this.metrics = metrics;
    this.err = err;
  }

  @Override
  public void run() {
    long start = System.nanoTime();
    long scheduled = 0;
    while (!stopped) {
      OpsPacer.Step step = pacer.next(System.nanoTime() - start, scheduled);
      if (!step.runNow()) {
        LockSupport.parkNanos(step.waitNanos());
        continue;
      }
      scheduled = step.scheduledOps();
      if (step.droppedOps() > 0) {
        metrics.dropped(step.droppedOps());
      }
      long began = System.nanoTime();
      try {
        app.operate();
        metrics.completed(System.nanoTime() - began);
      } catch (OutOfMemoryError e) {
        fatal = e;
        return;
      } catch (Exception e) {
        metrics.failed();
        if (failures++ < PRINTED_FAILURES) {
          e.printStackTrace(err);
        }
      }
    }
  }

  /** Asks the loop to end after the operation in progress. */
  void stop() {
    stopped = true;
  }

  /** The error that ended the loop, or null. */
  Throwable fatal() {
    return fatal;
  }
}
