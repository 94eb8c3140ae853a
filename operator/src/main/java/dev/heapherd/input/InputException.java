package dev.heapherd.input;

/** Bad input: names the file, the field and the problem in one line. */
public final class InputException extends Exception {

  /** Creates the exception; the message reads {@code file: field: problem}. */
  public InputException(String file, String field, String problem) {
    super(field.isEmpty() ? file + ": " + problem : file + ": " + field + ": " + problem);
  }
}
