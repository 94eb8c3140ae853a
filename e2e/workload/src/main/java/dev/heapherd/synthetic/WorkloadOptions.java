package dev.heapherd.synthetic;

import java.util.EnumMap;
import java.util.List;
import java.util.Map;

/**
 * The workload's settings, from flags first and environment variables second (containers set the
 * environment; a flag on the command line wins).
 */
public record WorkloadOptions(
    long liveBytes,
    double replaceBytesPerSecond,
    double garbageBytesPerSecond,
    ObjectSizeMix objectSizes,
    long durationSeconds,
    int port,
    Instrumentation instrumentation) {

  /** Bytes in one MiB, the unit of every size and rate option. */
  static final long BYTES_PER_MIB = 1024L * 1024L;

  /** The largest TCP port number. */
  static final int MAX_PORT = 65_535;

  /** A small service's old generation: fits -Xmx256m with room left for headroom experiments. */
  static final String DEFAULT_LIVE_MIB = "64";

  /** Turns a 64 MiB live set over about once a minute, like a moderately churning cache. */
  static final String DEFAULT_REPLACE_MIB_PER_SECOND = "1";

  /** A light request-serving rate: a young collection every second or two in a 256 MiB heap. */
  static final String DEFAULT_GARBAGE_MIB_PER_SECOND = "32";

  /**
   * Mostly small objects, some page-sized buffers, a few large arrays (the e2e brief's example).
   */
  static final String DEFAULT_OBJECT_SIZES = "64:0.5,4096:0.3,65536:0.2";

  /** Run until killed, as a service does. */
  static final String DEFAULT_DURATION_SECONDS = "0";

  /** The conventional HTTP port of a JVM service in a container. */
  static final String DEFAULT_PORT = "8080";

  /** Micrometer, since it is what Spring Boot services expose. */
  static final String DEFAULT_INSTRUMENTATION = "micrometer";

  /**
   * Reads the options from {@code args} ({@code --flag value} or {@code --flag=value}) and, for
   * flags not given, from {@code environment}; blank environment values count as unset.
   */
  public static WorkloadOptions parse(List<String> args, Map<String, String> environment)
      throws OptionException {
    Map<WorkloadOption, String> values = new EnumMap<>(WorkloadOption.class);
    Map<WorkloadOption, String> sources = new EnumMap<>(WorkloadOption.class);
    for (WorkloadOption option : WorkloadOption.values()) {
      String fromEnvironment = environment.get(option.environmentVariable());
      if (fromEnvironment != null && !fromEnvironment.isBlank()) {
        values.put(option, fromEnvironment.trim());
        sources.put(option, option.environmentVariable());
      } else {
        values.put(option, option.defaultValue());
        sources.put(option, option.flag() + " (default)");
      }
    }
    for (int index = 0; index < args.size(); index++) {
      String arg = args.get(index);
      String flag = arg;
      String value = null;
      int equals = arg.indexOf('=');
      if (arg.startsWith("--") && equals > 0) {
        flag = arg.substring(0, equals);
        value = arg.substring(equals + 1);
      }
      WorkloadOption option = WorkloadOption.forFlag(flag);
      if (option == null) {
        throw new OptionException("unknown option '" + arg + "' (--help lists the options)");
      }
      if (value == null) {
        if (index + 1 >= args.size()) {
          throw new OptionException(flag + ": needs a value");
        }
        value = args.get(++index);
      }
      values.put(option, value.trim());
      sources.put(option, flag);
    }

    long liveBytes = mibToBytes(values, sources, WorkloadOption.LIVE_MIB);
    double replaceBytesPerSecond =
        mibPerSecondToBytes(values, sources, WorkloadOption.REPLACE_MIB_PER_SECOND);
    double garbageBytesPerSecond =
        mibPerSecondToBytes(values, sources, WorkloadOption.GARBAGE_MIB_PER_SECOND);
    ObjectSizeMix objectSizes;
    try {
      objectSizes = ObjectSizeMix.parse(values.get(WorkloadOption.OBJECT_SIZES));
    } catch (IllegalArgumentException e) {
      throw new OptionException(sources.get(WorkloadOption.OBJECT_SIZES) + ": " + e.getMessage());
    }
    long durationSeconds =
        wholeNumber(values, sources, WorkloadOption.DURATION_SECONDS, 0, Long.MAX_VALUE);
    int port = (int) wholeNumber(values, sources, WorkloadOption.PORT, 0, MAX_PORT);
    Instrumentation instrumentation;
    try {
      instrumentation = Instrumentation.fromOptionValue(values.get(WorkloadOption.INSTRUMENTATION));
    } catch (IllegalArgumentException e) {
      throw new OptionException(
          sources.get(WorkloadOption.INSTRUMENTATION) + ": " + e.getMessage());
    }
    if (liveBytes == 0 && replaceBytesPerSecond > 0) {
      throw new OptionException(
          sources.get(WorkloadOption.REPLACE_MIB_PER_SECOND)
              + ": cannot replace live objects when the live set is 0 MiB");
    }
    return new WorkloadOptions(
        liveBytes,
        replaceBytesPerSecond,
        garbageBytesPerSecond,
        objectSizes,
        durationSeconds,
        port,
        instrumentation);
  }

  /** The usage text printed by {@code --help}. */
  public static String usage() {
    StringBuilder text =
        new StringBuilder("usage: java [jvm flags] -jar synthetic-workload.jar [options]\n");
    for (WorkloadOption option : WorkloadOption.values()) {
      text.append(
          String.format(
              "  %-26s %s (env %s, default %s)%n",
              option.flag(),
              option.description(),
              option.environmentVariable(),
              option.defaultValue()));
    }
    return text.toString();
  }

  private static long mibToBytes(
      Map<WorkloadOption, String> values,
      Map<WorkloadOption, String> sources,
      WorkloadOption option)
      throws OptionException {
    double mib = nonNegativeNumber(values, sources, option, "MiB");
    if (mib * BYTES_PER_MIB >= Long.MAX_VALUE) {
      throw new OptionException(sources.get(option) + ": " + values.get(option) + " is too large");
    }
    return Math.round(mib * BYTES_PER_MIB);
  }

  private static double mibPerSecondToBytes(
      Map<WorkloadOption, String> values,
      Map<WorkloadOption, String> sources,
      WorkloadOption option)
      throws OptionException {
    return nonNegativeNumber(values, sources, option, "MiB per second") * BYTES_PER_MIB;
  }

  private static double nonNegativeNumber(
      Map<WorkloadOption, String> values,
      Map<WorkloadOption, String> sources,
      WorkloadOption option,
      String unit)
      throws OptionException {
    String text = values.get(option);
    double number;
    try {
      number = Double.parseDouble(text);
    } catch (NumberFormatException e) {
      number = Double.NaN;
    }
    if (!Double.isFinite(number) || number < 0) {
      throw new OptionException(
          sources.get(option) + ": expected a number of " + unit + " >= 0, got '" + text + "'");
    }
    return number;
  }

  private static long wholeNumber(
      Map<WorkloadOption, String> values,
      Map<WorkloadOption, String> sources,
      WorkloadOption option,
      long min,
      long max)
      throws OptionException {
    String text = values.get(option);
    try {
      long number = Long.parseLong(text);
      if (number >= min && number <= max) {
        return number;
      }
    } catch (NumberFormatException e) {
      // Falls through to the one message that covers both malformed and out-of-range values.
    }
    String range = max == Long.MAX_VALUE ? ">= " + min : "from " + min + " to " + max;
    throw new OptionException(
        sources.get(option) + ": expected a whole number " + range + ", got '" + text + "'");
  }
}
