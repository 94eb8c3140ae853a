package dev.heapherd.synthetic;

/** A command-line flag or environment variable with a value the workload cannot use. */
public final class OptionException extends Exception {

  /** Creates the exception; the message is printed as the one line the user sees. */
  public OptionException(String message) {
    super(message);
  }
}
