package dev.heapherd.nodeagent;

import java.util.concurrent.ThreadFactory;
import java.util.concurrent.atomic.AtomicInteger;

/** Named daemon threads, so the agent's helpers never keep a JVM alive on their own. */
final class Threads {

  private Threads() {}

  static ThreadFactory daemon(String name) {
    AtomicInteger count = new AtomicInteger();
    return runnable -> {
      Thread thread = new Thread(runnable, "node-agent-" + name + "-" + count.incrementAndGet());
      thread.setDaemon(true);
      return thread;
    };
  }
}
