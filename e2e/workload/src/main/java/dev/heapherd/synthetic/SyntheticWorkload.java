package dev.heapherd.synthetic;

import java.io.IOException;
import java.io.PrintStream;
import java.net.BindException;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;

/**
 * A JVM with a set live size, promotion rate and garbage rate that serves its GC metrics and its
 * own account of what it holds over HTTP, for heapherd's real-component tests.
 */
public final class SyntheticWorkload {

  /** Exit code for a run that finished its duration. */
  static final int EXIT_OK = 0;

  /** Exit code for a failure at run time (port taken, heap too small while building). */
  static final int EXIT_FAILED = 1;

  /** Exit code for a bad option, as command-line tools conventionally use. */
  static final int EXIT_USAGE = 2;

  /** Prefix of every line the workload prints about itself. */
  static final String NAME = "synthetic-workload";

  private SyntheticWorkload() {}

  /** Runs the workload and exits with its exit code. */
  public static void main(String[] args) {
    System.exit(run(Arrays.asList(args), System.getenv(), System.out, System.err));
  }

  /** Runs the workload; returns its exit code instead of exiting, so tests can call it. */
  static int run(
      List<String> args, Map<String, String> environment, PrintStream out, PrintStream err) {
    if (args.contains("--help") || args.contains("-h")) {
      out.print(WorkloadOptions.usage());
      return EXIT_OK;
    }
    WorkloadOptions options;
    MetricsExposure metrics;
    try {
      options = WorkloadOptions.parse(args, environment);
      checkFitsInHeap(options);
      metrics = MetricsExposure.install(options.instrumentation());
    } catch (OptionException e) {
      err.println(NAME + ": " + e.getMessage());
      return EXIT_USAGE;
    }
    try (metrics) {
      return runWith(options, metrics, out, err);
    } catch (Exception e) {
      err.println(NAME + ": " + e);
      return EXIT_FAILED;
    }
  }

  private static int runWith(
      WorkloadOptions options, MetricsExposure metrics, PrintStream out, PrintStream err)
      throws InterruptedException {
    HeapLayout layout = HeapLayout.ofRunningVm();
    ArrayToucher toucher = new ArrayToucher();
    ReadySignal readySignal = new ReadySignal();
    long baselineLiveBytes = BaselineHeap.measure();
    LiveSet liveSet = new LiveSet(options.objectSizes(), options.liveBytes(), layout, toucher);
    AllocationDriver driver = new AllocationDriver(options, liveSet, toucher, layout);
    TruthReader truth = new TruthReader(options, liveSet, driver, readySignal, baselineLiveBytes);

    WorkloadServer server;
    try {
      server = new WorkloadServer(options.port(), metrics.handler(), truth::read, readySignal);
    } catch (BindException e) {
      err.println(NAME + ": cannot listen on 127.0.0.1:" + options.port() + ": " + e.getMessage());
      return EXIT_FAILED;
    } catch (IOException e) {
      err.println(NAME + ": cannot start the HTTP server: " + e.getMessage());
      return EXIT_FAILED;
    }
    server.start();
    try {
      try {
        liveSet.build();
      } catch (OutOfMemoryError e) {
        err.println(
            NAME
                + ": the live set of "
                + options.liveBytes() / WorkloadOptions.BYTES_PER_MIB
                + " MiB does not fit in the heap; raise -Xmx or lower --live-mib");
        return EXIT_FAILED;
      }
      Thread allocator = new Thread(driver, "synthetic-allocator");
      allocator.setDaemon(true);
      allocator.start();
      readySignal.markReady();
      out.println(NAME + " ready port=" + server.port() + " pid=" + ProcessHandle.current().pid());
      out.flush();

      if (options.durationSeconds() == 0) {
        allocator.join();
      } else {
        // Returns early if the loop died, so a failure is reported without waiting out the run.
        allocator.join(TimeUnit.SECONDS.toMillis(options.durationSeconds()));
        driver.stop();
        allocator.join();
      }
      if (driver.failure() != null) {
        err.println(
            NAME
                + ": ran out of heap while allocating ("
                + driver.failure().getMessage()
                + "); raise -Xmx or lower --live-mib or the rates");
        return EXIT_FAILED;
      }
      return EXIT_OK;
    } finally {
      server.stop();
    }
  }

  private static void checkFitsInHeap(WorkloadOptions options) throws OptionException {
    long maxHeapBytes = Runtime.getRuntime().maxMemory();
    if (options.liveBytes() >= maxHeapBytes) {
      throw new OptionException(
          WorkloadOption.LIVE_MIB.flag()
              + ": a live set of "
              + options.liveBytes() / WorkloadOptions.BYTES_PER_MIB
              + " MiB cannot fit in the maximum heap of "
              + maxHeapBytes / WorkloadOptions.BYTES_PER_MIB
              + " MiB (-Xmx)");
    }
  }
}
