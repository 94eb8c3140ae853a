package dev.heapherd.metrics;

import java.util.List;
import java.util.Map;

/**
 * One series of a range query's answer.
 *
 * @param labels the series' labels
 * @param points its values in time order
 */
public record Series(Map<String, String> labels, List<Point> points) {

  /** One value at one time. */
  public record Point(double epochSeconds, double value) {}

  /** Copies the collections. */
  public Series {
    labels = Map.copyOf(labels);
    points = List.copyOf(points);
  }

  /** The value of {@code label}, or an empty string. */
  public String label(String label) {
    return labels.getOrDefault(label, "");
  }
}
