package dev.heapherd.synthetic;

/** Every option the workload reads, with its flag, environment variable, default and meaning. */
public enum WorkloadOption {
  /** Steady live set size. */
  LIVE_MIB(
      "--live-mib",
      "WORKLOAD_LIVE_MIB",
      WorkloadOptions.DEFAULT_LIVE_MIB,
      "steady live set in MiB of heap (array headers included)"),
  /** Rate of replacing live objects with new ones. */
  REPLACE_MIB_PER_SECOND(
      "--replace-mib-per-second",
      "WORKLOAD_REPLACE_MIB_PER_SECOND",
      WorkloadOptions.DEFAULT_REPLACE_MIB_PER_SECOND,
      "MiB/s of live objects replaced by new ones (drives promotion into the old generation)"),
  /** Rate of short-lived allocation. */
  GARBAGE_MIB_PER_SECOND(
      "--garbage-mib-per-second",
      "WORKLOAD_GARBAGE_MIB_PER_SECOND",
      WorkloadOptions.DEFAULT_GARBAGE_MIB_PER_SECOND,
      "MiB/s of short-lived allocation that dies young"),
  /** Size mix of the byte arrays. */
  OBJECT_SIZES(
      "--object-sizes",
      "WORKLOAD_OBJECT_SIZES",
      WorkloadOptions.DEFAULT_OBJECT_SIZES,
      "array sizes as bytes:fraction pairs, fraction = share of bytes"),
  /** How long to run. */
  DURATION_SECONDS(
      "--duration-seconds",
      "WORKLOAD_DURATION_SECONDS",
      WorkloadOptions.DEFAULT_DURATION_SECONDS,
      "seconds to run after the live set is built, 0 = until killed"),
  /** HTTP port on the loopback address. */
  PORT(
      "--port",
      "WORKLOAD_PORT",
      WorkloadOptions.DEFAULT_PORT,
      "HTTP port on 127.0.0.1, 0 = pick a free one (printed on the ready line)"),
  /** Metrics library. */
  INSTRUMENTATION(
      "--instrumentation",
      "WORKLOAD_INSTRUMENTATION",
      WorkloadOptions.DEFAULT_INSTRUMENTATION,
      "metrics library: " + Instrumentation.acceptedValues());

  private final String flag;
  private final String environmentVariable;
  private final String defaultValue;
  private final String description;

  WorkloadOption(String flag, String environmentVariable, String defaultValue, String description) {
    this.flag = flag;
    this.environmentVariable = environmentVariable;
    this.defaultValue = defaultValue;
    this.description = description;
  }

  /** The command-line flag, e.g. {@code --live-mib}. */
  public String flag() {
    return flag;
  }

  /** The environment variable read when the flag is absent, e.g. {@code WORKLOAD_LIVE_MIB}. */
  public String environmentVariable() {
    return environmentVariable;
  }

  /** The value used when neither the flag nor the environment variable is set. */
  public String defaultValue() {
    return defaultValue;
  }

  /** One line saying what the option does. */
  public String description() {
    return description;
  }

  /** Finds the option for a flag, or null when the flag is unknown. */
  static WorkloadOption forFlag(String flag) {
    for (WorkloadOption option : values()) {
      if (option.flag.equals(flag)) {
        return option;
      }
    }
    return null;
  }
}
