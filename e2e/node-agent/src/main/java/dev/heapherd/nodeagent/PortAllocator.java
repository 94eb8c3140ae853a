package dev.heapherd.nodeagent;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.net.InetAddress;
import java.net.ServerSocket;
import java.util.HashSet;
import java.util.Set;

/**
 * Loopback ports for containers. All pods share 127.0.0.1, so each container that is told a port
 * gets its own, free when asked and kept for the pod's life (restarts reuse it).
 */
final class PortAllocator {

  private final Set<Integer> taken = new HashSet<>();

  /** A port free on 127.0.0.1 now and not given to another container. */
  synchronized int allocate() {
    while (true) {
      int port;
      try (ServerSocket socket = new ServerSocket(0, 1, InetAddress.getLoopbackAddress())) {
        port = socket.getLocalPort();
      } catch (IOException e) {
        throw new UncheckedIOException("no free loopback port", e);
      }
      if (taken.add(port)) {
        return port;
      }
    }
  }

  synchronized void release(int port) {
    taken.remove(port);
  }
}
