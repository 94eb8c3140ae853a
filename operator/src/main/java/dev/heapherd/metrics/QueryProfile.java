package dev.heapherd.metrics;

import java.util.EnumMap;
import java.util.List;
import java.util.Map;

/**
 * PromQL templates for one way of exporting JVM metrics. Every signal has one or more templates,
 * tried in order per pod: a later one answers only for pods the earlier ones left without a value
 * (for example old-generation occupancy when the after-GC gauge was never updated). Templates use
 * two placeholders: {@code ${selector}} (label matchers such as {@code namespace="shop"}) and
 * {@code ${window}} (a PromQL duration such as {@code 300s}). Each answers with one series per pod,
 * labelled {@code namespace} and {@code pod}.
 *
 * @param name the profile's name in pool files and on the command line
 * @param gcTimeSource what the GC time figures measure, said in every estimate's notes
 * @param templates per signal, in order of preference
 */
public record QueryProfile(String name, String gcTimeSource, Map<Signal, List<String>> templates) {

  /** Copies the map and checks that every signal the estimator needs has a template. */
  public QueryProfile {
    for (Signal s : Signal.values()) {
      if (s.required() && templates.getOrDefault(s, List.of()).isEmpty()) {
        throw new IllegalArgumentException(name + ": no template for " + s.key());
      }
    }
    templates = Map.copyOf(new EnumMap<>(templates));
  }

  /** This profile with {@code signal}'s templates replaced by {@code promql} alone. */
  public QueryProfile withOverride(Signal signal, String promql) {
    Map<Signal, List<String>> changed = new EnumMap<>(templates);
    changed.put(signal, List.of(promql));
    return new QueryProfile(name, gcTimeSource, changed);
  }

  /** The templates of {@code signal} with the placeholders filled in. */
  public List<String> queries(Signal signal, String selector, long windowSeconds) {
    return templates.getOrDefault(signal, List.of()).stream()
        .map(t -> t.replace("${selector}", selector).replace("${window}", windowSeconds + "s"))
        .toList();
  }
}
