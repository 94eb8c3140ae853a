package dev.heapherd.lab;

import java.math.BigDecimal;
import java.util.EnumMap;
import java.util.Locale;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/** Reads {@code app=value} lists and byte quantities in the Kubernetes notation. */
public final class Quantities {

  /** Bytes in a KiB; each binary suffix is 1024 times the one before. */
  static final long KIB = 1024;

  /** Bytes in a kB; each decimal suffix is 1000 times the one before. */
  static final long KB = 1000;

  private static final Pattern QUANTITY =
      Pattern.compile("([0-9]+(?:\\.[0-9]+)?)(Ki|Mi|Gi|Ti|k|M|G|T)?");

  private Quantities() {}

  /** Bytes of a quantity such as {@code 512Mi}, {@code 1.5Gi}, {@code 600M} or plain bytes. */
  public static long bytes(String quantity) {
    Matcher m = QUANTITY.matcher(quantity.strip());
    if (!m.matches()) {
      throw new IllegalArgumentException(
          "\"" + quantity + "\" is not a quantity such as 512Mi, 2Gi or 600M");
    }
    long unit =
        m.group(2) == null
            ? 1
            : switch (m.group(2)) {
              case "Ki" -> KIB;
              case "Mi" -> KIB * KIB;
              case "Gi" -> KIB * KIB * KIB;
              case "Ti" -> KIB * KIB * KIB * KIB;
              case "k" -> KB;
              case "M" -> KB * KB;
              case "G" -> KB * KB * KB;
              default -> KB * KB * KB * KB;
            };
    return new BigDecimal(m.group(1)).multiply(BigDecimal.valueOf(unit)).longValue();
  }

  /**
   * The values of a list such as {@code search=512Mi,sql=1Gi} by app; apps it does not name are
   * absent. Unknown apps and repeated apps are refused.
   */
  public static Map<AppKind, String> perApp(String list, String option) {
    Map<AppKind, String> values = new EnumMap<>(AppKind.class);
    if (list == null || list.isBlank()) {
      return values;
    }
    for (String item : list.split(",")) {
      String[] pair = item.split("=", 2);
      if (pair.length != 2 || pair[1].isBlank()) {
        throw new IllegalArgumentException(
            option + ": \"" + item + "\" is not app=value (e.g. search=512Mi)");
      }
      String name = pair[0].strip().toLowerCase(Locale.ROOT);
      AppKind app =
          AppKind.of(name)
              .orElseThrow(
                  () ->
                      new IllegalArgumentException(
                          option
                              + ": unknown app \""
                              + name
                              + "\" (use search, sql, cache, graph or codec)"));
      if (values.put(app, pair[1].strip()) != null) {
        throw new IllegalArgumentException(option + ": " + name + " is given twice");
      }
    }
    return values;
  }
}
