package dev.heapherd.synthetic;

/** Set once the live set is built; read by /ready and /truth. */
final class ReadySignal {

  private volatile boolean ready;

  void markReady() {
    ready = true;
  }

  boolean isReady() {
    return ready;
  }
}
