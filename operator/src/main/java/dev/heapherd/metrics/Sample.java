package dev.heapherd.metrics;

import java.util.Map;

/**
 * One series of an instant query's answer.
 *
 * @param labels the series' labels
 * @param value the value; may be NaN or infinite, as Prometheus can return either
 */
public record Sample(Map<String, String> labels, double value) {

  /** Copies the labels. */
  public Sample {
    labels = Map.copyOf(labels);
  }

  /** The value of {@code label}, or an empty string, as PromQL treats a missing label. */
  public String label(String label) {
    return labels.getOrDefault(label, "");
  }
}
