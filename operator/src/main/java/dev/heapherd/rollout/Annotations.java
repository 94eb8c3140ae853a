package dev.heapherd.rollout;

/** The annotations heapherd reads and writes on workloads. */
public final class Annotations {

  private static final String PREFIX = "heapherd.dev/";

  /** Set to "true" by an admin: heapherd never changes this workload. */
  public static final String OPT_OUT = PREFIX + "opt-out";

  /** Written with a change: the previous values and the target, as a rollout record in JSON. */
  public static final String ROLLOUT = PREFIX + "rollout";

  /** Written on rollback: the fingerprint of the restored pod template. */
  public static final String ROLLED_BACK = PREFIX + "rolled-back";

  /** When heapherd last finished or rolled back a change, RFC 3339; starts the cooldown. */
  public static final String CHANGED_AT = PREFIX + "changed-at";

  private Annotations() {}
}
