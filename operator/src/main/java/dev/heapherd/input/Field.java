package dev.heapherd.input;

import com.fasterxml.jackson.databind.JsonNode;
import dev.heapherd.engine.Units;
import java.util.ArrayList;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.OptionalDouble;
import java.util.Set;
import java.util.regex.Pattern;

/**
 * A node of a parsed YAML or JSON document together with its path, so every validation error can
 * name the file and the field.
 *
 * <p>Over 250 lines: one typed accessor per kind of value (text, name, time, choice, integer,
 * quantity, share of time, list, map) with the same error wording, kept side by side so their
 * messages stay alike.
 */
final class Field {

  /** Largest byte count accepted: the engine's largest heap. */
  static final long MAX_BYTES = Units.MAX_HEAP_BYTES;

  /** Largest plain number accepted (rates, prices): far beyond any real value, still exact. */
  static final double MAX_NUMBER = 1e15;

  /** Plain decimal notation only: no hex, no type suffixes, no NaN or Infinity. */
  private static final Pattern DECIMAL =
      Pattern.compile("[+-]?(\\d+\\.?\\d*|\\.\\d+)([eE][+-]?\\d+)?");

  private final String file;

  private final String path;
  private final JsonNode node;

  private Field(String file, String path, JsonNode node) {
    this.file = file;
    this.path = path;
    this.node = node;
  }

  /** The document root. */
  static Field root(String file, JsonNode node) {
    return new Field(file, "", node);
  }

  String path() {
    return path;
  }

  /** The file or source errors name. */
  String file() {
    return file;
  }

  /** The parsed value at this field. */
  JsonNode node() {
    return node;
  }

  /** An error about this field. */
  InputException error(String problem) {
    return new InputException(file, path, problem);
  }

  /** Child {@code name}, which must exist and not be null. */
  Field required(String name) throws InputException {
    return optional(name).orElseThrow(() -> child(name, null).error("is required"));
  }

  /** Child {@code name}, if present and not null. */
  Optional<Field> optional(String name) throws InputException {
    requireObject();
    JsonNode value = node.get(name);
    return value == null || value.isNull() ? Optional.empty() : Optional.of(child(name, value));
  }

  /** Fails on any key not in {@code allowed}: a misspelt field must not be silently ignored. */
  Field allowOnly(Set<String> allowed) throws InputException {
    requireObject();
    Iterator<String> names = node.fieldNames();
    while (names.hasNext()) {
      String name = names.next();
      if (!allowed.contains(name)) {
        throw child(name, null).error("unknown field (expected one of " + sorted(allowed) + ")");
      }
    }
    return this;
  }

  /** The elements of a list. */
  List<Field> list() throws InputException {
    if (!node.isArray()) {
      throw error("must be a list");
    }
    List<Field> out = new ArrayList<>();
    for (int i = 0; i < node.size(); i++) {
      out.add(new Field(file, path + "[" + i + "]", node.get(i)));
    }
    return out;
  }

  /** A map of strings to strings, such as labels. */
  Map<String, String> stringMap() throws InputException {
    requireObject();
    Map<String, String> out = new LinkedHashMap<>();
    var entries = node.fields();
    while (entries.hasNext()) {
      var entry = entries.next();
      Field value = child(entry.getKey(), entry.getValue());
      out.put(entry.getKey(), value.node.isTextual() ? value.node.asText() : value.text());
    }
    return out;
  }

  /** A non-empty string; numbers and booleans are not silently converted. */
  String text() throws InputException {
    if (node.isValueNode() && !node.isTextual()) {
      // YAML reads unquoted yes, no, on, 1 or 1.0 as booleans and numbers.
      throw error("must be a string, got " + node.asText() + " (put it in quotes)");
    }
    if (!node.isTextual() || node.asText().isBlank()) {
      throw error("must be a non-empty string");
    }
    return node.asText();
  }

  /** A Kubernetes object name: a DNS subdomain of lower-case letters, digits, '-' and '.'. */
  String objectName() throws InputException {
    String value = text();
    if (!ObjectNames.valid(value)) {
      throw error(
          ErrorText.quoted(value)
              + " is not a valid Kubernetes name (lower-case letters, digits, '-' and '.',"
              + " starting and ending with a letter or digit, at most 253 characters)");
    }
    return value;
  }

  /** A string matching {@code pattern} in full; {@code what} names it in the error. */
  String matching(Pattern pattern, String what) throws InputException {
    String value = text();
    if (!pattern.matcher(value).matches()) {
      throw error("\"" + value + "\" is not " + what);
    }
    return value;
  }

  /** An RFC 3339 timestamp such as {@code 2026-12-24T00:00:00Z}. */
  java.time.Instant instant() throws InputException {
    String value = text();
    try {
      return java.time.OffsetDateTime.parse(value).toInstant();
    } catch (java.time.format.DateTimeParseException e) {
      throw error("\"" + value + "\" is not an RFC 3339 time such as 2026-12-24T00:00:00Z");
    }
  }

  /** Child {@code name} as a boolean, or {@code fallback} when absent. */
  boolean booleanOr(String name, boolean fallback) throws InputException {
    Optional<Field> f = optional(name);
    if (f.isEmpty()) {
      return fallback;
    }
    if (!f.get().node.isBoolean()) {
      throw f.get().error("must be true or false, got " + f.get().describe());
    }
    return f.get().node.asBoolean();
  }

  /** One of {@code values}, spelt exactly. */
  String oneOf(Set<String> values) throws InputException {
    String value = text();
    if (!values.contains(value)) {
      throw error("\"" + value + "\" is not one of " + sorted(values));
    }
    return value;
  }

  /** A byte count given as a number or a quantity string such as {@code 512Mi}; must be > 0. */
  long positiveBytes() throws InputException {
    long bytes = bytes();
    if (bytes <= 0) {
      throw error("must be positive, got " + node.asText());
    }
    return bytes;
  }

  /** A byte count given as a number or a quantity string; must be >= 0. */
  long nonNegativeBytes() throws InputException {
    long bytes = bytes();
    if (bytes < 0) {
      throw error("must not be negative, got " + node.asText());
    }
    return bytes;
  }

  /** A whole number within {@code [min, max]}. */
  long integer(long min, long max) throws InputException {
    if (!node.isIntegralNumber() || !node.canConvertToLong()) {
      throw error("must be a whole number, got " + describe());
    }
    long value = node.asLong();
    if (value < min || value > max) {
      throw error("must be between " + min + " and " + max + ", got " + value);
    }
    return value;
  }

  /** A number between 0 and 1: a share of each second, such as GC seconds per second. */
  double shareOfTime() throws InputException {
    double value = nonNegativeNumber();
    if (value > 1) {
      throw error("must be at most 1 (all of each second), got " + node.asText());
    }
    return value;
  }

  /** A finite number >= 0, given as a number or a decimal string. */
  double nonNegativeNumber() throws InputException {
    double value = number();
    if (value < 0) {
      throw error("must not be negative, got " + node.asText());
    }
    return value;
  }

  /** A finite number > 0, given as a number or a decimal string. */
  double positiveNumber() throws InputException {
    double value = number();
    if (value <= 0) {
      throw error("must be positive, got " + node.asText());
    }
    return value;
  }

  /** Child {@code name} as a positive byte count, or null when absent. */
  Long positiveBytesOrNull(String name) throws InputException {
    Optional<Field> f = optional(name);
    return f.isPresent() ? f.get().positiveBytes() : null;
  }

  /** Child {@code name} as a non-negative byte count, or null when absent. */
  Long nonNegativeBytesOrNull(String name) throws InputException {
    Optional<Field> f = optional(name);
    return f.isPresent() ? f.get().nonNegativeBytes() : null;
  }

  /** Child {@code name} as a whole number within {@code [min, max]}, or null when absent. */
  Long integerOrNull(String name, long min, long max) throws InputException {
    Optional<Field> f = optional(name);
    return f.isPresent() ? f.get().integer(min, max) : null;
  }

  /** Child {@code name} as a text from {@code values}, or {@code fallback} when absent. */
  String oneOfOrDefault(String name, Set<String> values, String fallback) throws InputException {
    Optional<Field> f = optional(name);
    return f.isPresent() ? f.get().oneOf(values) : fallback;
  }

  /** Child {@code name} as a non-negative number, if present. */
  OptionalDouble optionalNonNegativeNumber(String name) throws InputException {
    Optional<Field> f = optional(name);
    return f.isPresent() ? OptionalDouble.of(f.get().nonNegativeNumber()) : OptionalDouble.empty();
  }

  private double number() throws InputException {
    double value;
    if (node.isNumber()) {
      value = node.asDouble();
    } else if (node.isTextual() && DECIMAL.matcher(node.asText().trim()).matches()) {
      value = Double.parseDouble(node.asText().trim());
    } else if (node.isTextual()) {
      throw error("must be a decimal number, got \"" + node.asText() + "\"");
    } else {
      throw error("must be a number, got " + describe());
    }
    if (!Double.isFinite(value) || Math.abs(value) > MAX_NUMBER) {
      throw error("must be a number of at most " + MAX_NUMBER + ", got " + node.asText());
    }
    return value;
  }

  private long bytes() throws InputException {
    long bytes;
    if (node.isIntegralNumber() && node.canConvertToLong()) {
      bytes = node.asLong();
    } else if (node.isNumber() && Math.abs(node.asDouble()) <= MAX_BYTES) {
      if (node.asDouble() != Math.rint(node.asDouble())) {
        throw error("must be a whole number of bytes, got " + node.asText());
      }
      bytes = (long) node.asDouble();
    } else if (node.isNumber()) {
      throw error(tooLarge());
    } else if (node.isTextual()) {
      try {
        bytes = Quantity.parseMemoryBytes(node.asText());
      } catch (IllegalArgumentException e) {
        throw error(e.getMessage());
      }
    } else {
      throw error("must be a byte count or a quantity such as 512Mi, got " + describe());
    }
    if (Math.abs(bytes) > MAX_BYTES) {
      throw error(tooLarge());
    }
    return bytes;
  }

  private String tooLarge() {
    return "is larger than " + Quantity.format(MAX_BYTES) + ", the largest size accepted";
  }

  private void requireObject() throws InputException {
    if (!node.isObject()) {
      throw error("must be a mapping of fields, got " + describe());
    }
  }

  private Field child(String name, JsonNode value) {
    return new Field(file, path.isEmpty() ? name : path + "." + name, value);
  }

  private String describe() {
    if (node.isObject()) {
      return "a mapping";
    }
    if (node.isArray()) {
      return "a list";
    }
    return node.isTextual() ? "\"" + node.asText() + "\"" : node.asText();
  }

  private static String sorted(Set<String> values) {
    return String.join(", ", values.stream().sorted().toList());
  }
}
