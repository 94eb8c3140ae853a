package dev.heapherd.input;

/**
 * Regular expressions and sizes the CRD schema checks fields against, which the pool reader checks
 * with the same expressions.
 */
public final class Patterns {

  /**
   * A non-negative Kubernetes quantity of bytes: digits, an optional fraction and an optional
   * binary or decimal suffix. The sign is left out on purpose so a negative size fails validation.
   */
  public static final String BYTES = "^[0-9]+(\\.[0-9]+)?(Ki|Mi|Gi|Ti|Pi|Ei|k|M|G|T|P|E)?$";

  /** A positive decimal price such as {@code 0.0045}. */
  public static final String PRICE = "^[0-9]+(\\.[0-9]+)?$";

  /** A name a POSIX shell accepts for an environment variable. */
  public static final String ENV_NAME = "^[A-Za-z_][A-Za-z0-9_]*$";

  /** A DNS-1123 label: what Kubernetes accepts as a container name. */
  public static final String DNS_LABEL = "^[a-z0-9]([-a-z0-9]*[a-z0-9])?$";

  /** A Prometheus label name. */
  public static final String PROMETHEUS_LABEL = "^[a-zA-Z_][a-zA-Z0-9_]*$";

  /** A proposal hash as the operator writes it: lowercase hexadecimal. */
  public static final String HASH = "^[0-9a-f]{12,64}$";

  /** An RFC 3339 timestamp with seconds and a zone. */
  public static final String TIMESTAMP =
      "^[0-9]{4}-[0-9]{2}-[0-9]{2}T[0-9]{2}:[0-9]{2}:[0-9]{2}(\\.[0-9]+)?(Z|[+-][0-9]{2}:[0-9]{2})$";

  /**
   * Longest quantity text accepted. The API server prices CEL rules by the size of what they read
   * and refuses a CRD whose rules could cost too much, so every string a rule reads is bounded.
   */
  public static final long QUANTITY_LENGTH = 32;

  /** Longest RFC 3339 timestamp text: date, time, nanoseconds and zone. */
  public static final long TIMESTAMP_LENGTH = 40;

  /** Most overrides in one pool: bounds the cost of the per-override CEL rule. */
  public static final long MAX_OVERRIDES = 500;

  /** Most freeze windows in one pool. */
  public static final long MAX_FREEZE_WINDOWS = 100;

  private Patterns() {}
}
