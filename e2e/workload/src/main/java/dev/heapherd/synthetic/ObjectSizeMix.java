package dev.heapherd.synthetic;

import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Set;

/** The mix of byte-array sizes that both the live set and the garbage are made of. */
public record ObjectSizeMix(List<SizeClass> classes) {

  /**
   * The largest array length the JDK promises to allocate on every collector: the JDK's own
   * ArraysSupport.SOFT_MAX_ARRAY_LENGTH (Integer.MAX_VALUE - 8).
   */
  static final int MAX_PAYLOAD_BYTES = Integer.MAX_VALUE - 8;

  /**
   * How far the typed fractions may sum away from 1 before the mix is rejected; wide enough for
   * hand-rounded thirds such as 0.333,0.333,0.333, narrow enough to catch a forgotten class.
   */
  static final double FRACTION_SUM_TOLERANCE = 0.01;

  /** Validates and copies the classes; fractions must already sum to 1. */
  public ObjectSizeMix {
    classes = List.copyOf(classes);
    if (classes.isEmpty()) {
      throw new IllegalArgumentException("needs at least one bytes:fraction pair");
    }
  }

  /**
   * Parses {@code bytes:fraction[,bytes:fraction...]}, for example {@code
   * 64:0.5,4096:0.3,65536:0.2}, where each fraction is the share of bytes (not of objects) in that
   * size. Fractions within {@link #FRACTION_SUM_TOLERANCE} of 1 are scaled to sum to exactly 1.
   */
  public static ObjectSizeMix parse(String text) {
    List<SizeClass> parsed = new ArrayList<>();
    Set<Integer> seenSizes = new HashSet<>();
    double fractionSum = 0;
    for (String pair : text.split(",", -1)) {
      String[] parts = pair.trim().split(":", -1);
      if (parts.length != 2) {
        throw new IllegalArgumentException(
            "expected bytes:fraction pairs separated by commas, got '" + pair.trim() + "'");
      }
      int payloadBytes = parsePayloadBytes(parts[0].trim());
      double fraction = parseFraction(parts[1].trim());
      if (!seenSizes.add(payloadBytes)) {
        throw new IllegalArgumentException("size " + payloadBytes + " appears more than once");
      }
      parsed.add(new SizeClass(payloadBytes, fraction));
      fractionSum += fraction;
    }
    if (Math.abs(fractionSum - 1) > FRACTION_SUM_TOLERANCE) {
      throw new IllegalArgumentException("fractions must sum to 1, they sum to " + fractionSum);
    }
    List<SizeClass> normalised = new ArrayList<>();
    for (SizeClass sizeClass : parsed) {
      normalised.add(
          new SizeClass(sizeClass.payloadBytes(), sizeClass.byteFraction() / fractionSum));
    }
    return new ObjectSizeMix(normalised);
  }

  /** The mix in the same text form that {@link #parse} reads. */
  public String toOptionText() {
    List<String> pairs = new ArrayList<>();
    for (SizeClass sizeClass : classes) {
      pairs.add(sizeClass.payloadBytes() + ":" + sizeClass.byteFraction());
    }
    return String.join(",", pairs);
  }

  private static int parsePayloadBytes(String text) {
    long bytes;
    try {
      bytes = Long.parseLong(text);
    } catch (NumberFormatException e) {
      throw new IllegalArgumentException("size '" + text + "' is not a whole number of bytes");
    }
    if (bytes < 1 || bytes > MAX_PAYLOAD_BYTES) {
      throw new IllegalArgumentException(
          "size " + bytes + " must be between 1 and " + MAX_PAYLOAD_BYTES + " bytes");
    }
    return (int) bytes;
  }

  private static double parseFraction(String text) {
    double fraction;
    try {
      fraction = Double.parseDouble(text);
    } catch (NumberFormatException e) {
      throw new IllegalArgumentException("fraction '" + text + "' is not a number");
    }
    if (!(fraction > 0 && fraction <= 1)) {
      throw new IllegalArgumentException("fraction " + text + " must be above 0 and at most 1");
    }
    return fraction;
  }
}
