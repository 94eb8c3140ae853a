package dev.heapherd.metrics;

import java.util.List;

/**
 * The answer to an instant query.
 *
 * @param samples one per series
 * @param warnings what Prometheus said about partial data, if anything
 */
public record QueryResult(List<Sample> samples, List<String> warnings) {

  /** Copies the lists. */
  public QueryResult {
    samples = List.copyOf(samples);
    warnings = List.copyOf(warnings);
  }
}
