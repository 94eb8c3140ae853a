package dev.heapherd.input;

import java.util.Locale;
import java.util.Optional;
import java.util.Set;

/**
 * Finds the series selectors of a PromQL expression, so that a pool's query can be refused when one
 * of them lacks the pool's namespace matchers. A small lexer over the PromQL grammar as the
 * Prometheus documentation gives it ("Querying basics", "Operators", "Functions"): strings,
 * comments, ranges, numbers, the label lists after grouping keywords and the names of called
 * functions are skipped; every other name and every brace block is a series selector.
 */
final class PromqlSelectors {

  /** Keywords followed by a parenthesised list of label names, not of selectors. */
  private static final Set<String> LABEL_LIST_KEYWORDS =
      Set.of("by", "without", "on", "ignoring", "group_left", "group_right");

  /** Binary operator words, the offset and at modifiers, and the float literals. */
  private static final Set<String> OTHER_KEYWORDS =
      Set.of("and", "or", "unless", "bool", "atan2", "offset", "inf", "nan");

  /** Aggregation operators, which may put their grouping clause before the parenthesis. */
  private static final Set<String> AGGREGATIONS =
      Set.of(
          "sum",
          "min",
          "max",
          "avg",
          "group",
          "stddev",
          "stdvar",
          "count",
          "count_values",
          "bottomk",
          "topk",
          "quantile",
          "limitk",
          "limit_ratio");

  private final String text;
  private final String placeholder;
  private int at;

  private PromqlSelectors(String text, String placeholder) {
    this.text = text;
    this.placeholder = placeholder;
  }

  /**
   * The first series selector of {@code promql} whose matchers do not include {@code placeholder},
   * as written, or empty when every selector has it.
   */
  static Optional<String> firstWithout(String promql, String placeholder) {
    return new PromqlSelectors(promql, placeholder).scan();
  }

  private Optional<String> scan() {
    while (at < text.length()) {
      char c = text.charAt(at);
      if (c == '"' || c == '\'' || c == '`') {
        skipString(c);
      } else if (c == '#') {
        skipTo('\n');
      } else if (c == '[') {
        // A range or subquery duration, where ${window} may stand.
        skipTo(']');
      } else if (c == '{') {
        int start = at;
        if (!braceBlockHasPlaceholder()) {
          return Optional.of(text.substring(start, at));
        }
      } else if (Character.isDigit(c)
          || (c == '.' && at + 1 < text.length() && isDigitAt(at + 1))) {
        skipNumber();
      } else if (isNameStart(c)) {
        Optional<String> bare = name();
        if (bare.isPresent()) {
          return bare;
        }
      } else {
        at++;
      }
    }
    return Optional.empty();
  }

  /** Reads a name at the cursor; a metric name with no brace block after it is returned. */
  private Optional<String> name() {
    int start = at;
    while (at < text.length() && isNamePart(text.charAt(at))) {
      at++;
    }
    String name = text.substring(start, at);
    String lower = name.toLowerCase(Locale.ROOT);
    char next = nextNonSpace();
    if (LABEL_LIST_KEYWORDS.contains(lower)) {
      if (next == '(') {
        skipSpace();
        skipTo(')');
      }
      return Optional.empty();
    }
    if (next == '(' || next == '{' || OTHER_KEYWORDS.contains(lower)) {
      // A call, a metric name whose brace block is checked next, or a keyword.
      return Optional.empty();
    }
    if (AGGREGATIONS.contains(lower) && startsWithKeyword()) {
      return Optional.empty();
    }
    return Optional.of(name);
  }

  /** Whether the text after the cursor starts with a grouping keyword of an aggregation. */
  private boolean startsWithKeyword() {
    int i = at;
    while (i < text.length() && Character.isWhitespace(text.charAt(i))) {
      i++;
    }
    String rest = text.substring(i).toLowerCase(Locale.ROOT);
    return rest.startsWith("by") || rest.startsWith("without");
  }

  /** Consumes a brace block and tells whether {@code placeholder} stands among its matchers. */
  private boolean braceBlockHasPlaceholder() {
    boolean found = false;
    at++;
    while (at < text.length()) {
      char c = text.charAt(at);
      if (text.startsWith(placeholder, at)) {
        found = true;
        at += placeholder.length();
      } else if (c == '"' || c == '\'' || c == '`') {
        skipString(c);
      } else if (c == '}') {
        at++;
        return found;
      } else {
        at++;
      }
    }
    return found;
  }

  private void skipString(char quote) {
    at++;
    while (at < text.length()) {
      char c = text.charAt(at);
      if (c == '\\' && quote != '`') {
        at += 2;
      } else {
        at++;
        if (c == quote) {
          return;
        }
      }
    }
  }

  private void skipTo(char end) {
    int found = text.indexOf(end, at);
    at = found < 0 ? text.length() : found + 1;
  }

  private void skipNumber() {
    while (at < text.length()) {
      char c = text.charAt(at);
      boolean exponentSign =
          (c == '+' || c == '-')
              && at > 0
              && (text.charAt(at - 1) == 'e' || text.charAt(at - 1) == 'E');
      if (Character.isLetterOrDigit(c) || c == '.' || c == '_' || exponentSign) {
        at++;
      } else {
        return;
      }
    }
  }

  private void skipSpace() {
    while (at < text.length() && Character.isWhitespace(text.charAt(at))) {
      at++;
    }
  }

  private char nextNonSpace() {
    int i = at;
    while (i < text.length() && Character.isWhitespace(text.charAt(i))) {
      i++;
    }
    return i < text.length() ? text.charAt(i) : '\0';
  }

  private boolean isDigitAt(int i) {
    return Character.isDigit(text.charAt(i));
  }

  private static boolean isNameStart(char c) {
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c == '_' || c == ':';
  }

  private static boolean isNamePart(char c) {
    return isNameStart(c) || (c >= '0' && c <= '9');
  }
}
