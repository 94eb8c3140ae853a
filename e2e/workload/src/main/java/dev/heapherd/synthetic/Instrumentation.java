package dev.heapherd.synthetic;

import java.util.Arrays;
import java.util.stream.Collectors;

/** Which metrics library exposes the workload's JVM metrics. */
public enum Instrumentation {
  /** Micrometer's PrometheusMeterRegistry with the JVM binders, served on /metrics. */
  MICROMETER("micrometer"),
  /** The Prometheus Java client's JvmMetrics, served on /metrics. */
  CLIENT_JAVA("client-java"),
  /** The OpenTelemetry Java agent's runtime metrics, served by the agent's own exporter. */
  OTEL("otel");

  private final String optionValue;

  Instrumentation(String optionValue) {
    this.optionValue = optionValue;
  }

  /** The spelling used on the command line and in the environment. */
  public String optionValue() {
    return optionValue;
  }

  /** Looks up the instrumentation for an option value, or throws with the accepted values. */
  public static Instrumentation fromOptionValue(String value) {
    for (Instrumentation instrumentation : values()) {
      if (instrumentation.optionValue.equals(value)) {
        return instrumentation;
      }
    }
    throw new IllegalArgumentException(
        "expected one of " + acceptedValues() + ", got '" + value + "'");
  }

  /** The accepted option values joined for messages, e.g. {@code micrometer|client-java|otel}. */
  public static String acceptedValues() {
    return Arrays.stream(values())
        .map(Instrumentation::optionValue)
        .collect(Collectors.joining("|"));
  }
}
