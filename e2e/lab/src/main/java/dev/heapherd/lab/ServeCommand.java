package dev.heapherd.lab;

import java.io.PrintStream;
import java.lang.management.ManagementFactory;
import java.net.BindException;
import java.util.concurrent.Callable;
import java.util.concurrent.TimeUnit;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/** {@code serve}: one lab service, loading its live set and then working at a paced rate. */
@Command(
    name = "serve",
    mixinStandardHelpOptions = true,
    description = "Run one lab service: load its live set, then work at a fixed pace.")
final class ServeCommand implements Callable<Integer> {

  /** Prefix of the line printed once the live set is built and measured. */
  static final String LOADED = "loaded";

  /** The line printed once the service is working; the runner and the tests wait for it. */
  static final String READY = "ready";

  /** Milliseconds to wait for the operation in progress when stopping. */
  static final long STOP_WAIT_MILLIS = 5_000;

  @Option(
      names = "--app",
      required = true,
      description = "search, sql, cache, graph or codec.",
      converter = AppKindConverter.class)
  AppKind app;

  @Option(names = "--port", required = true, description = "Port on 127.0.0.1 (0: any).")
  int port;

  @Option(
      names = "--ops-per-second",
      description = "Operations per second (default: the app's own, see README).")
  Double opsPerSecond;

  @Option(
      names = "--seed",
      defaultValue = "1",
      description = "Seed of the generated data and operations (default: ${DEFAULT-VALUE}).")
  long seed;

  @Option(
      names = "--size-scale",
      defaultValue = "1.0",
      description = "Multiplies the live set (default: ${DEFAULT-VALUE}).")
  double sizeScale;

  @Option(
      names = "--op-cost-scale",
      defaultValue = "1.0",
      description = "Multiplies the work of one operation (default: ${DEFAULT-VALUE}).")
  double opCostScale;

  @Option(
      names = "--parent-pid",
      description = "Exit when this process ends (the runner passes its own pid).")
  Long parentPid;

  @Override
  public Integer call() throws Exception {
    PrintStream out = System.out;
    PrintStream err = System.err;
    if (!(sizeScale > 0) || !(opCostScale > 0)) {
      err.println("heapherd-lab: --size-scale and --op-cost-scale must be above 0");
      return LabMain.EXIT_USAGE;
    }
    double ops = opsPerSecond != null ? opsPerSecond : app.defaultOpsPerSecond();
    if (!(ops > 0)) {
      err.println("heapherd-lab: --ops-per-second must be above 0");
      return LabMain.EXIT_USAGE;
    }
    if (parentPid != null) {
      // A runner killed outright cannot stop its children; they follow it instead.
      ProcessHandle.of(parentPid)
          .ifPresentOrElse(
              parent -> parent.onExit().thenRun(() -> System.exit(LabMain.EXIT_FAILED)),
              () -> System.exit(LabMain.EXIT_FAILED));
    }
    try (LabMetrics metrics = new LabMetrics(app.label(), ops)) {
      Readiness readiness = new Readiness();
      LabHttpServer http;
      try {
        http = new LabHttpServer(port, metrics::scrape, readiness::ready);
      } catch (BindException e) {
        err.println("heapherd-lab: cannot listen on 127.0.0.1:" + port + ": " + e.getMessage());
        return LabMain.EXIT_FAILED;
      }
      try (http;
          LabApp service =
              app.create(new AppSettings(sizeScale, opCostScale, seed), metrics.registry())) {
        return serve(service, metrics, readiness, ops, http.port(), out, err);
      }
    }
  }

  private int serve(
      LabApp service,
      LabMetrics metrics,
      Readiness readiness,
      double ops,
      int boundPort,
      PrintStream out,
      PrintStream err)
      throws Exception {
    long loadStart = System.nanoTime();
    try {
      service.load();
    } catch (OutOfMemoryError e) {
      err.println(
          "heapherd-lab: the "
              + app.label()
              + " live set does not fit in the heap; raise -Xmx or lower --size-scale");
      return LabMain.EXIT_FAILED;
    }
    long loadMillis = TimeUnit.NANOSECONDS.toMillis(System.nanoTime() - loadStart);
    // One full GC so the reported live set is what the service holds, not loading garbage.
    System.gc();
    long liveBytes = ManagementFactory.getMemoryMXBean().getHeapMemoryUsage().getUsed();
    metrics.liveSet(liveBytes);
    out.println(
        LOADED
            + " app="
            + app.label()
            + " liveBytes="
            + liveBytes
            + " loadMillis="
            + loadMillis
            + " port="
            + boundPort
            + " pid="
            + ProcessHandle.current().pid());
    PacedWorker worker = new PacedWorker(service, OpsPacer.of(ops), metrics, err);
    Thread thread = new Thread(worker, "lab-" + app.label());
    Runtime.getRuntime()
        .addShutdownHook(
            new Thread(
                () -> {
                  worker.stop();
                  try {
                    thread.join(STOP_WAIT_MILLIS);
                  } catch (InterruptedException e) {
                    Thread.currentThread().interrupt();
                  }
                }));
    thread.start();
    readiness.markReady();
    out.println(READY);
    out.flush();
    thread.join();
    if (worker.fatal() != null) {
      err.println(
          "heapherd-lab: "
              + app.label()
              + " ran out of heap while working ("
              + worker.fatal().getMessage()
              + "); raise -Xmx or lower --size-scale");
      return LabMain.EXIT_FAILED;
    }
    return 0;
  }

  /** Set once the service is working; read by /healthz. */
  static final class Readiness {
    private volatile boolean ready;

    void markReady() {
      ready = true;
    }

    boolean ready() {
      return ready;
    }
  }
}
