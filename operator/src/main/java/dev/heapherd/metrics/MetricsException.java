package dev.heapherd.metrics;

/** A Prometheus query that could not be answered; the message is one line for people. */
public final class MetricsException extends Exception {

  /** Why the query failed, so callers can word a hold reason. */
  public enum Kind {
    /** Connection refused, DNS failure, TLS failure. */
    UNREACHABLE,
    /** No answer within the timeout. */
    TIMEOUT,
    /** The server refused the request: bad query, bad credentials (HTTP 4xx). */
    REJECTED,
    /** The server failed (HTTP 5xx). */
    SERVER_ERROR,
    /** Prometheus answered with warnings: some of the data is missing. */
    PARTIAL_DATA,
    /** The answer was not a Prometheus API response. */
    BAD_RESPONSE
  }

  private final Kind kind;

  /** Creates the exception. */
  public MetricsException(Kind kind, String message) {
    super(message);
    this.kind = kind;
  }

  /** Why the query failed. */
  public Kind kind() {
    return kind;
  }
}
