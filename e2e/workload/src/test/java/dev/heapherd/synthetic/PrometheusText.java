package dev.heapherd.synthetic;

import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/** The samples of a Prometheus text-format (0.0.4) exposition, parsed for assertions. */
record PrometheusText(List<Sample> samples) {

  /** One sample line: metric name, labels in exposition order, value. */
  record Sample(String name, Map<String, String> labels, double value) {}

  static PrometheusText parse(String text) {
    List<Sample> samples = new ArrayList<>();
    for (String line : text.split("\n")) {
      if (line.isBlank() || line.startsWith("#")) {
        continue;
      }
      samples.add(parseLine(line));
    }
    return new PrometheusText(samples);
  }

  /** Samples of exactly this metric name. */
  List<Sample> named(String name) {
    return samples.stream().filter(sample -> sample.name().equals(name)).toList();
  }

  /** Every label value of {@code label} on samples named {@code name}. */
  List<String> labelValues(String name, String label) {
    return named(name).stream()
        .map(sample -> sample.labels().get(label))
        .filter(value -> value != null)
        .distinct()
        .toList();
  }

  private static Sample parseLine(String line) {
    int braceOrSpace = indexOfAny(line, '{', ' ');
    String name = line.substring(0, braceOrSpace);
    Map<String, String> labels = new LinkedHashMap<>();
    int position = braceOrSpace;
    if (line.charAt(position) == '{') {
      position++;
      while (line.charAt(position) != '}') {
        int equals = line.indexOf('=', position);
        String label = line.substring(position, equals).trim();
        StringBuilder value = new StringBuilder();
        position = equals + 2;
        while (line.charAt(position) != '"') {
          char c = line.charAt(position);
          if (c == '\\') {
            char escaped = line.charAt(++position);
            value.append(escaped == 'n' ? '\n' : escaped);
          } else {
            value.append(c);
          }
          position++;
        }
        labels.put(label, value.toString());
        position++;
        if (line.charAt(position) == ',') {
          position++;
        }
      }
      position++;
    }
    String[] rest = line.substring(position).trim().split("\\s+");
    return new Sample(name, labels, parseValue(rest[0]));
  }

  /** The text format writes infinities as +Inf and -Inf, which Java does not parse. */
  private static double parseValue(String text) {
    return switch (text) {
      case "+Inf" -> Double.POSITIVE_INFINITY;
      case "-Inf" -> Double.NEGATIVE_INFINITY;
      default -> Double.parseDouble(text);
    };
  }

  private static int indexOfAny(String line, char first, char second) {
    for (int index = 0; index < line.length(); index++) {
      if (line.charAt(index) == first || line.charAt(index) == second) {
        return index;
      }
    }
    throw new IllegalArgumentException("not a sample line: " + line);
  }
}
