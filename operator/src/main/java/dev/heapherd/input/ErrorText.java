package dev.heapherd.input;

/**
 * Makes text a user supplied safe to print on one line: control characters (line breaks, terminal
 * escapes) are written as escapes and long text is cut, so an error stays one readable line.
 */
public final class ErrorText {

  /** Longest quoted value, our choice: a long name is recognisable by its first 200 characters. */
  static final int MAX_QUOTED_CHARS = 200;

  /** Longest error line, our choice: several quoted values and their context fit. */
  static final int MAX_LINE_CHARS = 2000;

  private ErrorText() {}

  /** {@code value} in double quotes, escaped and cut to {@link #MAX_QUOTED_CHARS}. */
  public static String quoted(String value) {
    return "\"" + cut(escaped(value), MAX_QUOTED_CHARS) + "\"";
  }

  /** A whole message as one line: escaped and cut to {@link #MAX_LINE_CHARS}. */
  public static String oneLine(String message) {
    return cut(escaped(message == null ? "" : message), MAX_LINE_CHARS);
  }

  private static String escaped(String text) {
    StringBuilder out = new StringBuilder(text.length());
    text.codePoints()
        .forEach(
            c -> {
              switch (c) {
                case '\n' -> out.append("\\n");
                case '\r' -> out.append("\\r");
                case '\t' -> out.append("\\t");
                default -> {
                  if (Character.isISOControl(c)
                      || Character.getType(c) == Character.FORMAT
                      || Character.getType(c) == Character.LINE_SEPARATOR
                      || Character.getType(c) == Character.PARAGRAPH_SEPARATOR) {
                    out.append(String.format("\\u%04x", c));
                  } else {
                    out.appendCodePoint(c);
                  }
                }
              }
            });
    return out.toString();
  }

  private static String cut(String text, int max) {
    if (text.length() <= max) {
      return text;
    }
    int end = Character.isHighSurrogate(text.charAt(max - 1)) ? max - 1 : max;
    return text.substring(0, end) + "... (" + (text.length() - end) + " more characters)";
  }
}
