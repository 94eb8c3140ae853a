package dev.heapherd.nodeagent;

/** A pod's restartPolicy: which exits restart its containers. */
enum RestartPolicy {
  ALWAYS,
  ON_FAILURE,
  NEVER;

  /** The API's spelling; unset means Always, the API's default. */
  static RestartPolicy of(String value) {
    if (value == null) {
      return ALWAYS;
    }
    return switch (value) {
      case "OnFailure" -> ON_FAILURE;
      case "Never" -> NEVER;
      default -> ALWAYS;
    };
  }

  boolean restarts(int exitCode) {
    return this == ALWAYS || (this == ON_FAILURE && exitCode != 0);
  }
}
