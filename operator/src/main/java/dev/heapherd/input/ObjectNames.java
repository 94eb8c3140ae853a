package dev.heapherd.input;

import java.util.regex.Pattern;

/** The Kubernetes rule for object names: an RFC 1123 DNS subdomain. */
public final class ObjectNames {

  private static final Pattern OBJECT_NAME =
      Pattern.compile("[a-z0-9]([-a-z0-9]*[a-z0-9])?(\\.[a-z0-9]([-a-z0-9]*[a-z0-9])?)*");

  /** Longest DNS subdomain, per RFC 1123 as Kubernetes applies it. */
  private static final int MAX_NAME_LENGTH = 253;

  private ObjectNames() {}

  /** Whether {@code value} is a valid object name. */
  public static boolean valid(String value) {
    return value.length() <= MAX_NAME_LENGTH && OBJECT_NAME.matcher(value).matches();
  }
}
