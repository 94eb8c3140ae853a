package dev.heapherd.input;

import static dev.heapherd.engine.Units.GIB;
import static dev.heapherd.engine.Units.MIB;

import java.math.BigDecimal;
import java.math.RoundingMode;
import java.util.Collections;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/** Parses and formats Kubernetes memory quantities as whole bytes. */
public final class Quantity {

  // Base of the binary suffixes Ki..Ei; Kubernetes quantity grammar, <binarySI>.
  private static final BigDecimal BINARY_BASE = BigDecimal.valueOf(1024);

  // Powers of ten between neighbouring SI prefixes (milli 10^-3, kilo 10^3, mega 10^6, ...).
  private static final int SI_PREFIX_STEP = 3;

  // Decimal places shown by format(): two for GiB and one for MiB keep table columns short.
  private static final int GIB_DECIMALS = 2;
  private static final int MIB_DECIMALS = 1;

  // Multiplier per suffix, in the order the error message lists them. Binary suffixes are
  // powers of 1024 and decimal ones powers of ten, as in the Kubernetes quantity grammar
  // (<binarySI> and <decimalSI>); "m" is milli, which Kubernetes accepts even for memory.
  private static final Map<String, BigDecimal> SUFFIXES = suffixes();

  private static final String SUFFIX_LIST = String.join(", ", SUFFIXES.keySet());

  // <signedNumber><suffix>: the number may be "5", "5.", "5.25" or ".25" as in Kubernetes.
  private static final Pattern QUANTITY =
      Pattern.compile("([+-]?)((?:[0-9]+(?:\\.[0-9]*)?)|(?:\\.[0-9]+))(.*)", Pattern.DOTALL);

  // Kubernetes <decimalExponent>: "e" or "E" followed by a signed integer; a bare "E" is exa.
  private static final Pattern EXPONENT = Pattern.compile("[eE]([+-]?[0-9]+)");

  private static final BigDecimal LONG_MAX = BigDecimal.valueOf(Long.MAX_VALUE);
  private static final BigDecimal LONG_MIN = BigDecimal.valueOf(Long.MIN_VALUE);

  private Quantity() {}

  /**
   * Parses a Kubernetes memory quantity such as {@code 512Mi}, {@code 1.5Gi}, {@code 129M} or
   * {@code 129e6} into bytes, rounding any fraction of a byte away from zero.
   *
   * @throws IllegalArgumentException if the text is not a quantity, has an unknown unit or does not
   *     fit in a {@code long}
   */
  public static long parseBytes(String text) {
    return toLong(exactBytes(text), text);
  }

  /**
   * Parses a memory size that must be whole bytes, as heap and container sizes are: like {@link
   * #parseBytes}, but a quantity below one byte per unit (Kubernetes reads {@code 512m} as 0.512
   * bytes, not 512 MiB as {@code -Xmx} does) or any fraction of a byte is refused.
   *
   * @throws IllegalArgumentException with the reason, naming the text
   */
  public static long parseMemoryBytes(String text) {
    BigDecimal exact = exactBytes(text);
    if (exact.stripTrailingZeros().scale() > 0) {
      throw new IllegalArgumentException(
          text.strip().endsWith("m")
              ? quote(text) + " means thousandths of a byte; write Mi for mebibytes"
              : quote(text) + " is not a whole number of bytes");
    }
    return toLong(exact, text);
  }

  /** The quantity's exact value in bytes, with its sign. */
  private static BigDecimal exactBytes(String text) {
    if (text == null) {
      throw new IllegalArgumentException("not a quantity: null");
    }
    Matcher matcher = QUANTITY.matcher(text.strip());
    if (!matcher.matches()) {
      throw new IllegalArgumentException("not a quantity: " + quote(text));
    }
    BigDecimal value = applySuffix(new BigDecimal(matcher.group(2)), matcher.group(3), text);
    return matcher.group(1).equals("-") ? value.negate() : value;
  }

  /**
   * Formats bytes for tables: {@code 2Gi} or {@code 1.50Gi} from one GiB up, otherwise {@code
   * 512Mi} or {@code 0.5Mi}; zero is {@code 0}.
   */
  public static String format(long bytes) {
    if (bytes == 0) {
      return "0";
    }
    // BigDecimal because the magnitude of Long.MIN_VALUE does not fit in a long.
    BigDecimal magnitude = BigDecimal.valueOf(bytes).abs();
    String sign = bytes < 0 ? "-" : "";
    if (magnitude.compareTo(BigDecimal.valueOf(GIB)) >= 0) {
      return sign + inUnit(magnitude, GIB, GIB_DECIMALS) + "Gi";
    }
    return sign + inUnit(magnitude, MIB, MIB_DECIMALS) + "Mi";
  }

  private static Map<String, BigDecimal> suffixes() {
    Map<String, BigDecimal> map = new LinkedHashMap<>();
    String[] binary = {"Ki", "Mi", "Gi", "Ti", "Pi", "Ei"};
    for (int i = 0; i < binary.length; i++) {
      map.put(binary[i], BINARY_BASE.pow(i + 1));
    }
    map.put("m", BigDecimal.ONE.scaleByPowerOfTen(-SI_PREFIX_STEP));
    String[] decimal = {"k", "M", "G", "T", "P", "E"};
    for (int i = 0; i < decimal.length; i++) {
      map.put(decimal[i], BigDecimal.ONE.scaleByPowerOfTen(SI_PREFIX_STEP * (i + 1)));
    }
    return Collections.unmodifiableMap(map);
  }

  private static BigDecimal applySuffix(BigDecimal number, String suffix, String text) {
    if (suffix.isEmpty()) {
      return number;
    }
    BigDecimal multiplier = SUFFIXES.get(suffix);
    if (multiplier != null) {
      return number.multiply(multiplier);
    }
    Matcher exponent = EXPONENT.matcher(suffix);
    if (exponent.matches()) {
      try {
        return number.scaleByPowerOfTen(Integer.parseInt(exponent.group(1)));
      } catch (NumberFormatException | ArithmeticException e) {
        throw new IllegalArgumentException("exponent out of range in " + quote(text), e);
      }
    }
    if (!Character.isLetter(suffix.charAt(0))) {
      throw new IllegalArgumentException("not a quantity: " + quote(text));
    }
    throw new IllegalArgumentException(
        "unknown unit "
            + quote(suffix)
            + " in "
            + quote(text)
            + " (use "
            + SUFFIX_LIST
            + " or plain bytes)");
  }

  private static long toLong(BigDecimal value, String text) {
    // Range check before rounding: compareTo looks at magnitudes first, so a huge exponent
    // such as 1e999999999 is rejected without materialising its digits.
    if (value.compareTo(LONG_MAX) > 0 || value.compareTo(LONG_MIN) < 0) {
      throw new IllegalArgumentException(
          quote(text) + " is out of range: a quantity must fit in " + Long.MAX_VALUE + " bytes");
    }
    // Anything strictly between -1 and 1 but not zero is one byte; short-circuiting here also
    // avoids a huge division for inputs such as 1e-999999999.
    if (value.signum() != 0 && value.abs().compareTo(BigDecimal.ONE) < 0) {
      return value.signum();
    }
    // UP rounds away from zero, so parseBytes("-x") is always -parseBytes("x").
    return value.setScale(0, RoundingMode.UP).longValueExact();
  }

  private static String inUnit(BigDecimal magnitude, long unit, int decimals) {
    BigDecimal[] quotientAndRemainder = magnitude.divideAndRemainder(BigDecimal.valueOf(unit));
    if (quotientAndRemainder[1].signum() == 0) {
      return quotientAndRemainder[0].toPlainString();
    }
    return magnitude
        .divide(BigDecimal.valueOf(unit), decimals, RoundingMode.HALF_UP)
        .toPlainString();
  }

  // Quotes text for a one-line message, escaping anything that would break the line.
  private static String quote(String text) {
    StringBuilder quoted = new StringBuilder("\"");
    for (int i = 0; i < text.length(); i++) {
      char c = text.charAt(i);
      if (c == '"' || c == '\\') {
        quoted.append('\\').append(c);
      } else if (c == '\n') {
        quoted.append("\\n");
      } else if (c == '\t') {
        quoted.append("\\t");
      } else if (c == '\r') {
        quoted.append("\\r");
      } else if (Character.isISOControl(c)) {
        quoted.append(String.format("\\u%04x", (int) c));
      } else {
        quoted.append(c);
      }
    }
    return quoted.append('"').toString();
  }
}
