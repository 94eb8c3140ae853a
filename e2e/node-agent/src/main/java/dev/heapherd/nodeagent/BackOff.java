package dev.heapherd.nodeagent;

import java.time.Duration;

/**
 * The delay before restarting a container that exited: 1 s, doubling up to a cap, and back to 1 s
 * once a run lasted twice the cap (the kubelet forgets a back-off after twice its maximum too).
 */
final class BackOff {

  /** First delay, from the brief; the kubelet starts at 10 s, too slow for tests. */
  static final Duration INITIAL = Duration.ofSeconds(1);

  private final Duration cap;
  private Duration next = INITIAL;

  BackOff(Duration cap) {
    this.cap = cap;
  }

  /** The delay after a run of {@code ran}; later calls return longer delays up to the cap. */
  Duration after(Duration ran) {
    if (ran.compareTo(cap.multipliedBy(2)) >= 0) {
      next = INITIAL;
    }
    Duration delay = next.compareTo(cap) > 0 ? cap : next;
    next = delay.multipliedBy(2);
    return delay;
  }
}
