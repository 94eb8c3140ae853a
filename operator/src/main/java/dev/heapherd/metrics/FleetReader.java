package dev.heapherd.metrics;

import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.EnumMap;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;

/**
 * Fetches every signal of a profile for all pods matching a selector: a handful of queries per pool
 * whatever the number of pods and signals. The signals' first templates go out as one query, their
 * fallbacks as another, each series tagged with its signal, plus one range query for live growth.
 */
public final class FleetReader {

  /** The label a joined query tags each series with: the key of the signal it answers. */
  static final String SIGNAL_LABEL = "heapherd_signal";

  private static final Map<String, Signal> BY_KEY = new HashMap<>();

  static {
    for (Signal s : Signal.values()) {
      BY_KEY.put(s.key(), s);
    }
  }

  private final PrometheusClient client;
  private final QueryProfile profile;

  /** A reader using {@code client} and {@code profile}. */
  public FleetReader(PrometheusClient client, QueryProfile profile) {
    this.client = client;
    this.profile = profile;
  }

  /** The profile in use. */
  public QueryProfile profile() {
    return profile;
  }

  /**
   * The samples of every query in {@code level}, by signal: one query joining them all, each series
   * tagged with its signal's key. Should Prometheus refuse the joined query (a pool's own template
   * that does not parse, say), each is sent alone, so the error names the template at fault.
   */
  private Map<Signal, List<Sample>> fetch(Map<Signal, String> level, Instant at)
      throws MetricsException {
    Map<Signal, List<Sample>> out = new EnumMap<>(Signal.class);
    if (level.size() > 1) {
      String joined =
          level.entrySet().stream()
              .map(
                  e ->
                      "label_replace("
                          + e.getValue()
                          + ", \""
                          + SIGNAL_LABEL
                          + "\", \""
                          + e.getKey().key()
                          + "\", \"\", \"\")")
              .collect(java.util.stream.Collectors.joining(" or "));
      try {
        for (Sample sample : checked(client.query(joined, at))) {
          Signal signal = BY_KEY.get(sample.label(SIGNAL_LABEL));
          if (signal != null) {
            out.computeIfAbsent(signal, k -> new ArrayList<>()).add(sample);
          }
        }
        return out;
      } catch (MetricsException e) {
        if (e.kind() != MetricsException.Kind.REJECTED) {
          throw e;
        }
      }
    }
    for (var query : level.entrySet()) {
      out.put(query.getKey(), checked(client.query(query.getValue(), at)));
    }
    return out;
  }

  /** The samples of {@code result}; warnings refuse it. */
  private static List<Sample> checked(QueryResult result) throws MetricsException {
    if (!result.warnings().isEmpty()) {
      // Estimates from part of the fleet's data would look sound and be wrong: refuse them.
      throw new MetricsException(
          MetricsException.Kind.PARTIAL_DATA,
          "Prometheus returned partial data: " + String.join("; ", result.warnings()));
    }
    return result.samples();
  }

  /**
   * Growth of the after-GC live figure between the two halves of the window, per pod: one range
   * query of two points. A live set still growing (warm-up, a leak) is no steady state to size.
   */
  private Map<String, Double> liveGrowth(String selector, long windowSeconds, Instant at)
      throws MetricsException {
    long half = windowSeconds / 2;
    String query = profile.queries(Signal.LIVE_BYTES, selector, half).get(0);
    Map<String, Double> growth = new HashMap<>();
    for (Series series :
        client.queryRange(query, at.minusSeconds(half), at, Duration.ofSeconds(half))) {
      var points = series.points();
      if (points.size() == 2 && points.get(0).value() > 0) {
        growth.put(
            series.label("namespace") + "/" + series.label("pod"),
            points.get(1).value() / points.get(0).value() - 1);
      }
    }
    return growth;
  }

  /**
   * The value of {@code label} per pod ({@code namespace/pod}) of {@code namespace}, from the
   * series of Prometheus' own {@code up} metric: one query whatever the number of pods.
   */
  public Map<String, String> podLabel(
      String namespace, String label, long windowSeconds, Instant at) throws MetricsException {
    String query =
        "max by (namespace, pod, "
            + label
            + ") (max_over_time(up{"
            + selector(namespace)
            + "}["
            + windowSeconds
            + "s]))";
    Map<String, String> values = new HashMap<>();
    for (Sample sample : client.query(query, at).samples()) {
      if (!sample.label(label).isEmpty()) {
        values.put(sample.label("namespace") + "/" + sample.label("pod"), sample.label(label));
      }
    }
    return values;
  }

  /** The label matchers of {@code namespace}'s series, which every query is scoped by. */
  static String selector(String namespace) {
    return "namespace=\"" + namespace + "\"";
  }

  /**
   * Reads the pods of {@code namespace} over the {@code windowSeconds} ending at {@code at}. Pods
   * are those scraped in the window (the sample count query answers for them), plus every pod of
   * another namespace that any query answered for, so that the caller drops and reports it.
   */
  public List<PodSignals> read(String namespace, long windowSeconds, Instant at)
      throws MetricsException {
    String selector = selector(namespace);
    Map<String, Map<Signal, Double>> values = new TreeMap<>();
    Map<String, String> namespaces = new HashMap<>();
    Set<String> liveFallback = new HashSet<>();
    Map<String, Set<String>> collectors = new HashMap<>();
    for (int i = 0; ; i++) {
      Map<Signal, String> level = new EnumMap<>(Signal.class);
      for (Signal signal : Signal.values()) {
        List<String> queries = profile.queries(signal, selector, windowSeconds);
        if (i < queries.size()) {
          level.put(signal, queries.get(i));
        }
      }
      if (level.isEmpty()) {
        break;
      }
      for (var answer : fetch(level, at).entrySet()) {
        Signal signal = answer.getKey();
        for (Sample sample : answer.getValue()) {
          String key = sample.label("namespace") + "/" + sample.label("pod");
          namespaces.put(key, sample.label("namespace"));
          Map<Signal, Double> pod = values.computeIfAbsent(key, k -> new EnumMap<>(Signal.class));
          if (signal == Signal.COLLECTOR_NAMES) {
            collectors.computeIfAbsent(key, k -> new HashSet<>()).add(sample.label("collector"));
            continue;
          }
          if (pod.putIfAbsent(signal, sample.value()) == null
              && signal == Signal.LIVE_BYTES
              && i > 0) {
            liveFallback.add(key);
          }
        }
      }
    }
    Map<String, Double> growth = liveGrowth(selector, windowSeconds, at);
    List<PodSignals> pods = new ArrayList<>();
    for (var entry : values.entrySet()) {
      String key = entry.getKey();
      boolean ours = namespace.equals(namespaces.get(key));
      if (ours && !entry.getValue().containsKey(Signal.SAMPLE_COUNT)) {
        continue;
      }
      pods.add(
          new PodSignals(
              namespaces.get(key),
              key.substring(key.indexOf('/') + 1),
              entry.getValue(),
              liveFallback.contains(key),
              collectors.getOrDefault(key, Set.of()),
              growth.getOrDefault(key, Double.NaN)));
    }
    return pods;
  }
}
