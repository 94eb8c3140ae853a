package dev.heapherd.input;

import dev.heapherd.engine.Objective;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Optional;
import java.util.Set;
import java.util.regex.Pattern;

/**
 * Reads and validates a HeapPool file.
 *
 * <p>Over 250 lines: every field of the pool, its defaults and its range, in the order the
 * reference (docs/heappool.md) lists them, so that the two can be compared line by line.
 */
public final class PoolFileReader {

  /** The only API version this build understands. */
  public static final String API_VERSION = "heapherd.dev/v1alpha1";

  /** The resource kind. */
  public static final String KIND = "HeapPool";

  /** Query profiles a pool may name; they match the metrics package's built-in profiles. */
  public static final Set<String> PROFILES = PoolFile.names(PoolFile.Profile.class);

  /** Signals whose query a pool may replace; they match the metrics package's signal keys. */
  public static final Set<String> SIGNALS =
      Set.of(
          "liveBytes",
          "heapMaxBytes",
          "youngGcSecondsPerSecond",
          "oldGcSecondsPerSecond",
          "oldCollectionsPerSecond",
          "promotionBytesPerSecond",
          "youngCapacityBytes",
          "oldCapacityBytes",
          "startupLiveBytes",
          "allocationBytesPerSecond",
          "nonHeapBytes",
          "collectorNames",
          "sampleCount",
          "restarts");

  /**
   * One hour: long enough to hold several old-generation cycles of most services and to smooth
   * daily load within it. Our default; see docs/metrics.md.
   */
  public static final PoolFile.Metrics DEFAULT_METRICS =
      new PoolFile.Metrics("micrometer", 3600, List.of(), "");

  /**
   * Rollout defaults. The JVM reads JAVA_TOOL_OPTIONS at start (documented by the JDK tools
   * reference), so it works without changing the image's command. Cooldown one hour, equal to the
   * default metrics window, so the next estimate is made from pods running the new heap. Threshold
   * 5 percent: our choice, below which the predicted gain rarely pays for restarting pods. Metrics
   * older than 10 minutes: our choice, two default Prometheus staleness periods (5 minutes,
   * documented by Prometheus).
   */
  public static final PoolFile.Rollout DEFAULT_ROLLOUT =
      new PoolFile.Rollout("", "JAVA_TOOL_OPTIONS", true, false, false, 1, 3600, 5, 600, List.of());

  /** Environment variable names a POSIX shell accepts. */
  private static final Pattern ENV_NAME = Pattern.compile(Patterns.ENV_NAME);

  /** Container names: DNS-1123 labels, as Kubernetes requires. */
  private static final Pattern CONTAINER_NAME = Pattern.compile(Patterns.DNS_LABEL);

  /** Proposal hashes as the operator writes them. */
  private static final Pattern HASH = Pattern.compile(Patterns.HASH);

  /** Longest cooldown or metrics age accepted: one week. */
  public static final long MAX_SECONDS = 7L * 24 * 3600;

  /** Most workloads allowed to roll at once: beyond it "one at a time" has lost its meaning. */
  public static final long MAX_ROLLING = 100;

  /** Shortest metrics age accepted: below a few scrape intervals every pool would hold. */
  public static final long MIN_METRICS_AGE_SECONDS = 30;

  /** Prometheus label names, per its data model documentation. */
  private static final Pattern PROMETHEUS_LABEL = Pattern.compile(Patterns.PROMETHEUS_LABEL);

  /** Shortest window: tests use tens of seconds at one-second scrapes. */
  public static final long MIN_WINDOW_SECONDS = 10;

  /** The placeholder a pool's own PromQL must carry: heapherd fills in the namespace matcher. */
  public static final String SELECTOR_PLACEHOLDER = "${selector}";

  /** Longest window: one week, beyond which a fleet's code has usually changed. */
  public static final long MAX_WINDOW_SECONDS = 7L * 24 * 3600;

  /** Upper bound on a weight: beyond it one workload would drown every other's GC time. */
  public static final long MAX_WEIGHT = 1000;

  /** Upper bound on percent settings: a heap ten times its live set is headroom enough. */
  public static final long MAX_PERCENT = 1000;

  private PoolFileReader() {}

  /** Reads {@code file}; every problem is reported as an {@link InputException}. */
  public static PoolFile read(Path file) throws InputException {
    return read(Documents.read(file));
  }

  /**
   * Validates a HeapPool already parsed into a tree, such as one read from the API server; errors
   * name {@code source} where a file reader would name the file.
   */
  public static PoolFile fromTree(String source, com.fasterxml.jackson.databind.JsonNode tree)
      throws InputException {
    return read(Field.root(source, tree));
  }

  /**
   * The {@code api} types bind the document (which fields exist), the reader's checks read every
   * value and name the usual mistakes in their own words, then the generated CRD's schema refuses
   * whatever the API server would refuse in a resource.
   */
  private static PoolFile read(Field document) throws InputException {
    var unbound = PoolBinding.check(document);
    PoolFile pool = readFields(document);
    if (unbound.isPresent()) {
      throw unbound.get();
    }
    PoolSchema.check(document.file(), document.node());
    return pool;
  }

  private static PoolFile readFields(Field root) throws InputException {
    String apiVersion = root.required("apiVersion").text();
    if (!API_VERSION.equals(apiVersion)) {
      throw root.required("apiVersion").error("must be " + API_VERSION + ", got " + apiVersion);
    }
    root.required("kind").oneOf(Set.of(KIND));
    Field metadata = root.required("metadata");
    String name = metadata.required("name").objectName();
    String namespace =
        metadata.optional("namespace").isPresent()
            ? metadata.required("namespace").objectName()
            : "";

    Field spec = root.required("spec");
    PoolFile.Mode mode =
        PoolFile.Mode.valueOf(
            spec.oneOfOrDefault(
                "mode", PoolFile.names(PoolFile.Mode.class), PoolFile.Mode.DryRun.name()));
    Objective objective = objective(spec);
    Field selector = spec.required("selector");
    var matchLabels = selector.required("matchLabels").stringMap();
    if (matchLabels.isEmpty()) {
      throw selector.required("matchLabels").error("must name at least one label");
    }
    Optional<Field> defaultsField = spec.optional("defaults");
    WorkloadSettings defaults =
        defaultsField.isPresent()
            ? settings(defaultsField.get())
            : new WorkloadSettings(null, null, null, null, null, null);
    checkFloorBelowCeiling(
        defaultsField.orElse(spec),
        defaults.over(WorkloadSettings.BUILT_IN),
        defaults.heapFloorBytes() != null);

    List<PoolFile.Override> overrides = new ArrayList<>();
    Optional<Field> overridesField = spec.optional("overrides");
    if (overridesField.isPresent()) {
      Set<String> seen = new HashSet<>();
      for (Field item : overridesField.get().list()) {
        String workload = item.required("name").objectName();
        if (!seen.add(workload)) {
          throw item.required("name").error("duplicate workload name \"" + workload + "\"");
        }
        WorkloadSettings settings = settings(item);
        checkFloorBelowCeiling(
            item,
            settings.over(defaults.over(WorkloadSettings.BUILT_IN)),
            settings.heapFloorBytes() != null || defaults.heapFloorBytes() != null);
        overrides.add(new PoolFile.Override(workload, settings));
      }
    }
    Optional<Field> metricsField = spec.optional("metrics");
    PoolFile.Metrics metrics =
        metricsField.isPresent() ? metrics(metricsField.get()) : DEFAULT_METRICS;
    Optional<Field> rolloutField = spec.optional("rollout");
    PoolFile.Rollout rollout =
        rolloutField.isPresent() ? rollout(rolloutField.get()) : DEFAULT_ROLLOUT;
    String approved = "";
    if (spec.optional("approvedProposal").isPresent()) {
      approved = spec.required("approvedProposal").matching(HASH, "a proposal hash");
    }
    return new PoolFile(
        name,
        namespace,
        mode,
        objective,
        matchLabels,
        defaults,
        overrides,
        metrics,
        rollout,
        approved);
  }

  private static PoolFile.Rollout rollout(Field f) throws InputException {
    PoolFile.Rollout d = DEFAULT_ROLLOUT;
    String container = d.containerName();
    if (f.optional("containerName").isPresent()) {
      container = f.required("containerName").matching(CONTAINER_NAME, "a container name");
    }
    String variable = d.jvmOptionsVariable();
    if (f.optional("jvmOptionsVariable").isPresent()) {
      variable =
          f.required("jvmOptionsVariable").matching(ENV_NAME, "an environment variable name");
    }
    Long rolling = f.integerOrNull("maxRollingWorkloads", 1, MAX_ROLLING);
    Long cooldown = f.integerOrNull("cooldownSeconds", 0, MAX_SECONDS);
    Long threshold = f.integerOrNull("changeThresholdPercent", 0, 100);
    Long maxAge = f.integerOrNull("metricsMaxAgeSeconds", MIN_METRICS_AGE_SECONDS, MAX_SECONDS);
    List<PoolFile.FreezeWindow> windows = new ArrayList<>();
    if (f.optional("freezeWindows").isPresent()) {
      for (Field w : f.required("freezeWindows").list()) {
        var start = w.required("start").instant();
        var end = w.required("end").instant();
        if (!end.isAfter(start)) {
          throw w.required("end").error("must be after start " + start);
        }
        windows.add(new PoolFile.FreezeWindow(start, end));
      }
    }
    return new PoolFile.Rollout(
        container,
        variable,
        f.booleanOr("setMemoryRequest", d.setMemoryRequest()),
        f.booleanOr("setInitialHeap", d.setInitialHeap()),
        PoolFile.Approval.Automatic.name()
            .equals(
                f.oneOfOrDefault(
                    "approval",
                    PoolFile.names(PoolFile.Approval.class),
                    PoolFile.Approval.Manual.name())),
        rolling == null ? d.maxRollingWorkloads() : rolling,
        cooldown == null ? d.cooldownSeconds() : cooldown,
        threshold == null ? d.changeThresholdPercent() : threshold,
        maxAge == null ? d.metricsMaxAgeSeconds() : maxAge,
        windows);
  }

  private static PoolFile.Metrics metrics(Field f) throws InputException {
    String profile = f.oneOfOrDefault("profile", PROFILES, DEFAULT_METRICS.profile());
    Long window = f.integerOrNull("windowSeconds", MIN_WINDOW_SECONDS, MAX_WINDOW_SECONDS);
    List<PoolFile.Query> queries = new ArrayList<>();
    if (f.optional("queries").isPresent()) {
      Set<String> seen = new HashSet<>();
      for (Field q : f.required("queries").list()) {
        String signal = q.required("signal").oneOf(SIGNALS);
        if (!seen.add(signal)) {
          throw q.required("signal").error("duplicate query for " + signal);
        }
        String promql = q.required("promql").text();
        // A selector without it reads every namespace Prometheus scrapes, not the pool's.
        var unscoped = PromqlSelectors.firstWithout(promql, SELECTOR_PLACEHOLDER);
        if (unscoped.isPresent() || !promql.contains(SELECTOR_PLACEHOLDER)) {
          throw q.required("promql")
              .error(
                  "must contain "
                      + SELECTOR_PLACEHOLDER
                      + " in each series selector, so that it reads only the pool's namespace"
                      + unscoped.map(u -> "; " + ErrorText.quoted(u) + " has none").orElse(""));
        }
        queries.add(new PoolFile.Query(signal, promql));
      }
    }
    String label = "";
    if (f.optional("workloadLabel").isPresent()) {
      label = f.required("workloadLabel").text();
      if (!PROMETHEUS_LABEL.matcher(label).matches()) {
        throw f.required("workloadLabel").error("\"" + label + "\" is not a Prometheus label name");
      }
    }
    return new PoolFile.Metrics(
        profile, window == null ? DEFAULT_METRICS.windowSeconds() : window, queries, label);
  }

  private static Objective objective(Field spec) throws InputException {
    Optional<Field> budget = spec.optional("memoryBudget");
    Optional<Field> prices = spec.optional("prices");
    if (budget.isPresent() == prices.isPresent()) {
      throw spec.error("set exactly one of memoryBudget or prices");
    }
    if (budget.isPresent()) {
      return new Objective.Budget(budget.get().positiveBytes());
    }
    Field p = prices.get();
    return new Objective.Prices(
        p.required("memoryPerGiBHour").positiveNumber(),
        p.required("cpuPerCoreHour").positiveNumber());
  }

  private static WorkloadSettings settings(Field f) throws InputException {
    return new WorkloadSettings(
        f.integerOrNull("weight", 1, MAX_WEIGHT),
        f.positiveBytesOrNull("heapFloor"),
        f.positiveBytesOrNull("heapCeiling"),
        f.integerOrNull("minHeadroomPercent", 0, MAX_PERCENT),
        f.integerOrNull("maxStepPercent", 1, MAX_PERCENT),
        f.nonNegativeBytesOrNull("limitMargin"));
  }

  private static void checkFloorBelowCeiling(
      Field where, WorkloadSettings effective, boolean floorFromUser) throws InputException {
    Long ceiling = effective.heapCeilingBytes();
    if (ceiling != null && effective.heapFloorBytes() > ceiling) {
      throw where.error(
          "heapFloor "
              + Quantity.format(effective.heapFloorBytes())
              + (floorFromUser ? "" : " (the built-in default)")
              + " is above heapCeiling "
              + Quantity.format(ceiling));
    }
  }
}
