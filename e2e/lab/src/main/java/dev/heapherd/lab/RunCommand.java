package dev.heapherd.lab;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import dev.heapherd.harness.PrometheusServer;
import java.io.PrintStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.EnumSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/**
 * {@code run}: starts the services as child JVMs and the real Prometheus scraping them, warms up,
 * measures each service's GC seconds per second and achieved pace over a window, writes the result
 * as JSON and stops every process it started by its handle (also on failure and Ctrl-C).
 */
@Command(
    name = "run",
    mixinStandardHelpOptions = true,
    description =
        "Start the five services and Prometheus, warm up, measure GC time per service, write JSON.")
final class RunCommand implements Callable<Integer> {

  /** The collectors a run can use, with the HotSpot flag that selects each. */
  enum Collector {
    G1("-XX:+UseG1GC"),
    Parallel("-XX:+UseParallelGC");

    private final String flag;

    Collector(String flag) {
      this.flag = flag;
    }
  }

  /** How often the runner checks that its services are still alive while it waits. */
  static final Duration WATCH_INTERVAL = Duration.ofSeconds(1);

  /**
   * Share of the expected scrapes a service must have in the window for its figures to count: at
   * one scrape a second, a window missing more than half of them is not a measurement.
   */
  static final double MIN_SCRAPE_SHARE = 0.5;

  /** Nanoseconds in a second, for process CPU time. */
  static final double NANOS_PER_SECOND = 1e9;

  @Option(
      names = "--collector",
      required = true,
      description = "G1 or Parallel: the collector of every service.")
  Collector collector;

  @Option(
      names = "--heaps",
      description =
          "Heap per service as app=quantity, e.g. search=512Mi,sql=1Gi (-Xms and -Xmx); services"
              + " not named get their default times --size-scale.")
  String heaps;

  @Option(
      names = "--ops",
      description = "Operations per second per service as app=number (default: each app's own).")
  String ops;

  @Option(
      names = "--apps",
      split = ",",
      converter = AppKindConverter.class,
      description = "Services to run (default: all five).")
  List<AppKind> apps;

  @Option(
      names = "--size-scale",
      defaultValue = "1.0",
      description = "Live-set scale passed to every service (default: ${DEFAULT-VALUE}).")
  double sizeScale;

  @Option(
      names = "--op-cost-scale",
      defaultValue = "1.0",
      description = "Operation cost scale passed to every service (default: ${DEFAULT-VALUE}).")
  double opCostScale;

  @Option(
      names = "--seed",
      defaultValue = "1",
      description = "Base seed; service number i gets seed+i (default: ${DEFAULT-VALUE}).")
  long seed;

  @Option(
      names = "--jvm-option",
      description = "Extra JVM flag for every service (repeatable), e.g. -XX:ParallelGCThreads=1.")
  List<String> jvmOptions = new ArrayList<>();

  @Option(
      names = "--warmup-seconds",
      defaultValue = "60",
      description =
          "Seconds after every service is ready before measuring (default: ${DEFAULT-VALUE}).")
  long warmupSeconds;

  @Option(
      names = "--measure-seconds",
      defaultValue = "120",
      description = "Length of the measure window (default: ${DEFAULT-VALUE}).")
  long measureSeconds;

  @Option(
      names = "--keep-running-seconds",
      defaultValue = "0",
      description =
          "After writing the result, keep the fleet and Prometheus running this long for another"
              + " tool (e.g. heapherd snapshot) to read (default: ${DEFAULT-VALUE}).")
  long keepRunningSeconds;

  @Option(
      names = "--ready-timeout-seconds",
      defaultValue = "300",
      description = "Seconds the services get to load (default: ${DEFAULT-VALUE}).")
  long readyTimeoutSeconds;

  @Option(names = "--out", required = true, description = "JSON file to write the result to.")
  Path out;

  @Option(
      names = "--work-dir",
      description = "Directory for logs and Prometheus data (default: a new temporary directory).")
  Path workDir;

  /** A run that cannot go on; its message is printed as one line. */
  static final class RunFailure extends Exception {
    RunFailure(String message) {
      super(message);
    }
  }

  @Override
  public Integer call() throws Exception {
    PrintStream stdout = System.out;
    PrintStream stderr = System.err;
    Map<AppKind, String> heapByApp;
    Map<AppKind, String> opsByApp;
    try {
      heapByApp = Quantities.perApp(heaps, "--heaps");
      heapByApp.values().forEach(Quantities::bytes);
      opsByApp = Quantities.perApp(ops, "--ops");
      opsByApp.values().forEach(Double::parseDouble);
    } catch (IllegalArgumentException e) {
      stderr.println("heapherd-lab: " + e.getMessage());
      return LabMain.EXIT_USAGE;
    }
    if (measureSeconds < 1 || warmupSeconds < 0 || keepRunningSeconds < 0) {
      stderr.println("heapherd-lab: --measure-seconds must be at least 1, the others at least 0");
      return LabMain.EXIT_USAGE;
    }
    Set<AppKind> selected =
        apps == null || apps.isEmpty() ? EnumSet.allOf(AppKind.class) : EnumSet.copyOf(apps);
    Path dir = workDir != null ? workDir : Files.createTempDirectory("heapherd-lab");
    Files.createDirectories(dir);
    LabFleet fleet = new LabFleet(stderr);
    Thread hook = new Thread(fleet::close, "heapherd-lab-stop");
    Runtime.getRuntime().addShutdownHook(hook);
    try (fleet) {
      return run(fleet, selected, heapByApp, opsByApp, dir, stdout);
    } catch (RunFailure e) {
      stderr.println("heapherd-lab: " + e.getMessage());
      return LabMain.EXIT_FAILED;
    } finally {
      // The fleet is already stopped on this path; the hook stays only for Ctrl-C and kill.
      try {
        Runtime.getRuntime().removeShutdownHook(hook);
      } catch (IllegalStateException shuttingDown) {
        // The JVM is already exiting and runs the hook itself.
      }
    }
  }

  private int run(
      LabFleet fleet,
      Set<AppKind> selected,
      Map<AppKind, String> heapByApp,
      Map<AppKind, String> opsByApp,
      Path dir,
      PrintStream stdout)
      throws Exception {
    PrometheusServer prometheus = PrometheusServer.start(dir.resolve("prometheus"));
    fleet.prometheus(prometheus);
    stdout.println("prometheus " + prometheus.uri() + " workDir=" + dir);
    List<String> jvmFlags = new ArrayList<>();
    jvmFlags.add(collector.flag);
    jvmFlags.addAll(jvmOptions);
    for (AppKind app : selected) {
      String heap =
          heapByApp.getOrDefault(app, Math.round(app.defaultHeapMiB() * sizeScale) + "Mi");
      double pace =
          opsByApp.containsKey(app)
              ? Double.parseDouble(opsByApp.get(app))
              : app.defaultOpsPerSecond();
      List<String> serveArgs =
          List.of(
              "--seed=" + (seed + app.ordinal()),
              "--size-scale=" + sizeScale,
              "--op-cost-scale=" + opCostScale);
      ChildService service =
          ChildService.start(
              app, PrometheusServer.freePort(), heap, pace, jvmFlags, serveArgs, dir);
      fleet.add(service);
      stdout.println(
          "started "
              + app.label()
              + " pid="
              + service.pid()
              + " port="
              + service.port()
              + " heap="
              + heap
              + " ops/s="
              + pace);
    }
    fleet.publishTargets();
    awaitReady(fleet, stdout);
    stdout.println("warming up " + warmupSeconds + " s");
    watch(fleet, Duration.ofSeconds(warmupSeconds));
    Instant from = Instant.now();
    stdout.println("measuring " + measureSeconds + " s from " + from);
    watch(fleet, Duration.ofSeconds(measureSeconds));
    Instant to = Instant.now();
    LabResult result = measure(fleet, prometheus, from, to);
    new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT).writeValue(out.toFile(), result);
    stdout.println("result " + out.toAbsolutePath());
    for (LabResult.App app : result.apps()) {
      stdout.printf(
          "  %-7s heap=%-7s gc=%.4f s/s ops=%.1f/%.1f cpu=%.2f%n",
          app.app(),
          app.heap(),
          app.gcSecondsPerSecond(),
          app.achievedOpsPerSecond(),
          app.targetOpsPerSecond(),
          app.processCpuCores());
    }
    stdout.printf("  pool    gc=%.4f s/s%n", result.pool().gcSecondsPerSecond());
    if (keepRunningSeconds > 0) {
      stdout.println(
          "holding "
              + keepRunningSeconds
              + " s prometheus="
              + prometheus.uri()
              + " namespace="
              + LabFleet.NAMESPACE);
      stdout.flush();
      watch(fleet, Duration.ofSeconds(keepRunningSeconds));
    }
    stdout.println("stopping");
    stdout.flush();
    return 0;
  }

  private void awaitReady(LabFleet fleet, PrintStream stdout) throws Exception {
    Instant deadline = Instant.now().plusSeconds(readyTimeoutSeconds);
    List<ChildService> pending = new ArrayList<>(fleet.services());
    while (!pending.isEmpty()) {
      for (var it = pending.iterator(); it.hasNext(); ) {
        ChildService s = it.next();
        if (!s.alive()) {
          throw new RunFailure(s.failure());
        }
        if (s.ready()) {
          stdout.println("ready " + s.app().label() + " liveBytes=" + s.liveSetBytes().orElse(0L));
          it.remove();
        }
      }
      if (Instant.now().isAfter(deadline)) {
        throw new RunFailure(
            "not ready after "
                + readyTimeoutSeconds
                + " s: "
                + pending.stream().map(s -> s.app().label()).toList());
      }
      Thread.sleep(WATCH_INTERVAL.toMillis());
    }
  }

  /** Waits {@code duration}, failing as soon as a service has exited. */
  private static void watch(LabFleet fleet, Duration duration) throws Exception {
    Instant end = Instant.now().plus(duration);
    while (Instant.now().isBefore(end)) {
      for (ChildService s : fleet.services()) {
        if (!s.alive()) {
          throw new RunFailure(s.failure());
        }
      }
      Thread.sleep(
          Math.min(WATCH_INTERVAL.toMillis(), Duration.between(Instant.now(), end).toMillis() + 1));
    }
  }

  private LabResult measure(LabFleet fleet, PrometheusServer server, Instant from, Instant to)
      throws Exception {
    PromQuery prometheus = new PromQuery(server.uri());
    long window = Duration.between(from, to).toSeconds();
    List<LabResult.App> results = new ArrayList<>();
    for (ChildService s : fleet.services()) {
      String selector =
          "{namespace=\"" + LabFleet.NAMESPACE + "\",pod=\"" + LabFleet.pod(s.app()) + "\"}";
      double scrapes =
          prometheus.value("sum(count_over_time(up" + selector + "[" + window + "s]))", to);
      if (!(scrapes >= window * MIN_SCRAPE_SHARE / PrometheusServer.SCRAPE_INTERVAL_SECONDS)) {
        throw new RunFailure(
            s.app().label() + " was scraped " + scrapes + " times in " + window + " s");
      }
      double pause = rate(prometheus, "jvm_gc_pause_seconds_sum", selector, window, to);
      double concurrent =
          rate(prometheus, "jvm_gc_concurrent_phase_time_seconds_sum", selector, window, to);
      double cpu =
          rate(prometheus, "process_cpu_time_ns_total", selector, window, to) / NANOS_PER_SECOND;
      results.add(
          new LabResult.App(
              s.app().label(),
              LabFleet.NAMESPACE,
              LabFleet.pod(s.app()),
              s.heap(),
              s.heapBytes(),
              pause + concurrent,
              pause,
              concurrent,
              rate(prometheus, "lab_operations_total", selector, window, to),
              s.opsPerSecond(),
              rate(prometheus, "lab_operations_dropped_total", selector, window, to),
              cpu,
              s.liveSetBytes().orElse(0L),
              s.alive()));
    }
    LabResult.Pool pool =
        new LabResult.Pool(
            results.stream().mapToLong(LabResult.App::heapBytes).sum(),
            results.stream().mapToDouble(LabResult.App::gcSecondsPerSecond).sum(),
            results.stream().mapToDouble(LabResult.App::achievedOpsPerSecond).sum(),
            results.stream().mapToDouble(LabResult.App::targetOpsPerSecond).sum());
    return new LabResult(
        collector.name(),
        from.toString(),
        to.toString(),
        warmupSeconds,
        window,
        sizeScale,
        server.uri().toString(),
        results,
        pool);
  }

  /** The per-second rate of counter {@code metric} summed over its series; 0 when absent. */
  private static double rate(
      PromQuery prometheus, String metric, String selector, long window, Instant to)
      throws Exception {
    double value = prometheus.value("sum(rate(" + metric + selector + "[" + window + "s]))", to);
    return Double.isNaN(value) ? 0 : value;
  }
}
