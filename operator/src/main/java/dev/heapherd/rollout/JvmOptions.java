package dev.heapherd.rollout;

import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Objects;
import java.util.Optional;
import java.util.OptionalLong;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/** Rewrites the heap flags in a JVM options value such as {@code JAVA_TOOL_OPTIONS}. */
public final class JvmOptions {

  // Size suffixes are powers of 1024 (java command documentation for -Xmx: k/K, m/M, g/G;
  // HotSpot also accepts t/T).
  private static final long BINARY_STEP = 1024L;
  private static final long KIB = BINARY_STEP;
  private static final long MIB = KIB * BINARY_STEP;
  private static final long GIB = MIB * BINARY_STEP;
  private static final long TIB = GIB * BINARY_STEP;

  private static final Pattern JVM_SIZE = Pattern.compile("([0-9]+)([kKmMgGtT]?)");

  private static final String XMX = "-Xmx";
  private static final String XMS = "-Xms";

  // HotSpot matches these as prefixes and reads the rest of the token as the value, so a
  // token is a heap flag exactly when it starts with one of them.
  private static final List<String> MAX_HEAP_SIZE_FLAGS = List.of(XMX, "-XX:MaxHeapSize=");
  private static final List<String> MAX_HEAP_RAM_FLAGS =
      List.of("-XX:MaxRAMPercentage=", "-XX:MaxRAM=", "-XX:MaxRAMFraction=");
  private static final List<String> INITIAL_HEAP_SIZE_FLAGS = List.of(XMS, "-XX:InitialHeapSize=");
  private static final List<String> INITIAL_HEAP_RAM_FLAGS =
      List.of("-XX:InitialRAMPercentage=", "-XX:InitialRAMFraction=");

  // Marks "not inside quotes" while tokenising.
  private static final char NO_QUOTE = '\0';

  private JvmOptions() {}

  /**
   * Returns {@code options} with every maximum-heap flag replaced by one {@code -Xmx}, and, when
   * {@code initialHeapBytes} is present, every initial-heap flag replaced by one {@code -Xms} right
   * after it; all other tokens are kept verbatim and joined by single spaces.
   *
   * @param options the JVM options value, may be null or blank
   * @param maxHeapBytes the new maximum heap, positive
   * @param initialHeapBytes the new initial heap, positive and at most {@code maxHeapBytes}
   * @throws IllegalArgumentException if a heap size is out of range or the JVM would refuse the
   *     options (an unmatched quote)
   */
  public static String withHeap(String options, long maxHeapBytes, OptionalLong initialHeapBytes) {
    Objects.requireNonNull(initialHeapBytes, "initialHeapBytes");
    if (maxHeapBytes <= 0) {
      throw new IllegalArgumentException("max heap must be positive, got " + maxHeapBytes);
    }
    if (initialHeapBytes.isPresent()) {
      long initial = initialHeapBytes.getAsLong();
      if (initial <= 0 || initial > maxHeapBytes) {
        throw new IllegalArgumentException(
            "initial heap must be positive and at most the max heap "
                + maxHeapBytes
                + ", got "
                + initial);
      }
    }
    List<String> result = new ArrayList<>();
    int insertAt = -1;
    for (Token token : tokenize(options)) {
      String flag = token.value();
      boolean replaced =
          startsWithAny(flag, MAX_HEAP_SIZE_FLAGS)
              || startsWithAny(flag, MAX_HEAP_RAM_FLAGS)
              || (initialHeapBytes.isPresent()
                  && (startsWithAny(flag, INITIAL_HEAP_SIZE_FLAGS)
                      || startsWithAny(flag, INITIAL_HEAP_RAM_FLAGS)));
      if (replaced) {
        if (insertAt < 0) {
          insertAt = result.size();
        }
      } else {
        result.add(
            initialHeapBytes.isPresent() ? token.raw() : capInitialHeap(token, maxHeapBytes));
      }
    }
    List<String> heapFlags = new ArrayList<>();
    heapFlags.add(XMX + formatSize(maxHeapBytes));
    initialHeapBytes.ifPresent(initial -> heapFlags.add(XMS + formatSize(initial)));
    result.addAll(insertAt < 0 ? result.size() : insertAt, heapFlags);
    return String.join(" ", result);
  }

  /**
   * Returns the maximum heap set by {@code -Xmx} or {@code -XX:MaxHeapSize}, the last one winning
   * as in the JVM; empty if there is none, the last one is not a valid size, or the JVM would
   * refuse the options (see {@link #problem}).
   */
  public static OptionalLong maxHeapBytes(String options) {
    if (problem(options).isPresent()) {
      return OptionalLong.empty();
    }
    OptionalLong last = OptionalLong.empty();
    for (Token token : tokenize(options)) {
      for (String flag : MAX_HEAP_SIZE_FLAGS) {
        if (token.value().startsWith(flag)) {
          last = parseSize(token.value().substring(flag.length()));
        }
      }
    }
    return last;
  }

  // HotSpot exits at start-up with "Initial heap size set to a larger value than the maximum
  // heap size" when -Xms / InitialHeapSize exceeds the max heap, so such a token is lowered.
  private static String capInitialHeap(Token token, long maxHeapBytes) {
    for (String flag : INITIAL_HEAP_SIZE_FLAGS) {
      if (token.value().startsWith(flag)) {
        OptionalLong size = parseSize(token.value().substring(flag.length()));
        if (size.isPresent() && size.getAsLong() > maxHeapBytes) {
          return flag + formatSize(maxHeapBytes);
        }
      }
    }
    return token.raw();
  }

  /**
   * Why the JVM would refuse {@code options} at start-up, or empty. HotSpot refuses an unmatched
   * quote in JAVA_TOOL_OPTIONS ("Unmatched quote in JAVA_TOOL_OPTIONS", checked against the real
   * JVM in JvmOptionsJvmIT).
   */
  public static Optional<String> problem(String options) {
    try {
      tokenize(options);
      return Optional.empty();
    } catch (IllegalArgumentException e) {
      return Optional.of(e.getMessage());
    }
  }

  // Splits as HotSpot splits an options variable: on whitespace, where a single- or double-quoted
  // run belongs to the token around it and its quotes are dropped, so '"-Xmx8g"' is the flag
  // -Xmx8g. The raw text is kept so that other tokens are written back exactly as they were.
  private static List<Token> tokenize(String options) {
    List<Token> tokens = new ArrayList<>();
    if (options == null) {
      return tokens;
    }
    StringBuilder raw = new StringBuilder();
    StringBuilder value = new StringBuilder();
    char quote = NO_QUOTE;
    for (int i = 0; i < options.length(); i++) {
      char c = options.charAt(i);
      if (quote != NO_QUOTE) {
        raw.append(c);
        if (c == quote) {
          quote = NO_QUOTE;
        } else {
          value.append(c);
        }
      } else if (Character.isWhitespace(c)) {
        if (raw.length() > 0) {
          tokens.add(new Token(raw.toString(), value.toString()));
          raw.setLength(0);
          value.setLength(0);
        }
      } else {
        raw.append(c);
        if (c == '"' || c == '\'') {
          quote = c;
        } else {
          value.append(c);
        }
      }
    }
    if (quote != NO_QUOTE) {
      throw new IllegalArgumentException(
          "the JVM options have an unmatched "
              + (quote == '"' ? "double" : "single")
              + " quote, so the JVM would refuse to start; close it");
    }
    if (raw.length() > 0) {
      tokens.add(new Token(raw.toString(), value.toString()));
    }
    return tokens;
  }

  /** One option as written ({@code raw}) and as the JVM reads it ({@code value}). */
  private record Token(String raw, String value) {}

  private static boolean startsWithAny(String token, List<String> flags) {
    for (String flag : flags) {
      if (token.startsWith(flag)) {
        return true;
      }
    }
    return false;
  }

  // Empty when the text is not a JVM size or does not fit in a long.
  private static OptionalLong parseSize(String text) {
    Matcher matcher = JVM_SIZE.matcher(text);
    if (!matcher.matches()) {
      return OptionalLong.empty();
    }
    try {
      long number = Long.parseLong(matcher.group(1));
      return OptionalLong.of(Math.multiplyExact(number, unitBytes(matcher.group(2))));
    } catch (NumberFormatException | ArithmeticException e) {
      return OptionalLong.empty();
    }
  }

  private static long unitBytes(String suffix) {
    return switch (suffix.toLowerCase(Locale.ROOT)) {
      case "k" -> KIB;
      case "m" -> MIB;
      case "g" -> GIB;
      case "t" -> TIB;
      // No suffix means bytes.
      default -> 1L;
    };
  }

  // Largest unit that represents the size exactly, so the JVM sees the same number of bytes.
  private static String formatSize(long bytes) {
    if (bytes % GIB == 0) {
      return bytes / GIB + "g";
    }
    if (bytes % MIB == 0) {
      return bytes / MIB + "m";
    }
    if (bytes % KIB == 0) {
      return bytes / KIB + "k";
    }
    return Long.toString(bytes);
  }
}
