package dev.heapherd.nodeagent;

import io.fabric8.kubernetes.api.model.Container;
import io.fabric8.kubernetes.api.model.ContainerPort;
import io.fabric8.kubernetes.api.model.IntOrString;
import io.fabric8.kubernetes.api.model.Probe;
import java.io.IOException;
import java.net.InetSocketAddress;
import java.net.Socket;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Duration;
import java.time.Instant;
import java.util.Optional;
import java.util.concurrent.Executor;
import java.util.concurrent.atomic.AtomicBoolean;

/**
 * Whether one run of a container is ready. A readiness probe (httpGet or tcpSocket) runs as the
 * kubelet runs it, but against 127.0.0.1 and the port the agent gave the container. Without a
 * probe, an image with a ready path is ready once that path first answers 200, any other once
 * started.
 */
final class Readiness {

  /** The kubelet counts 200-399 as success (pkg/probe/http). */
  private static final int FIRST_SUCCESS_STATUS = 200;

  private static final int FIRST_FAILING_STATUS = 400;

  /** One check against the process. */
  private interface Check {
    boolean passes(Duration timeout);
  }

  /** When and how often to check, and how many results flip readiness. */
  private record Timing(
      Duration initialDelay,
      Duration period,
      Duration timeout,
      int successThreshold,
      int failureThreshold) {

    /** Probe defaults of the Kubernetes API (core/v1 Probe), for fields left unset. */
    private static final int DEFAULT_PERIOD_SECONDS = 10;

    private static final int DEFAULT_TIMEOUT_SECONDS = 1;
    private static final int DEFAULT_SUCCESS_THRESHOLD = 1;
    private static final int DEFAULT_FAILURE_THRESHOLD = 3;

    /** A ready path is asked every second until it answers; a small JVM is ready in seconds. */
    static final Timing READY_PATH =
        new Timing(Duration.ZERO, Duration.ofSeconds(1), Duration.ofSeconds(1), 1, 1);

    static Timing of(Probe probe) {
      return new Timing(
          Duration.ofSeconds(orElse(probe.getInitialDelaySeconds(), 0)),
          Duration.ofSeconds(orElse(probe.getPeriodSeconds(), DEFAULT_PERIOD_SECONDS)),
          Duration.ofSeconds(orElse(probe.getTimeoutSeconds(), DEFAULT_TIMEOUT_SECONDS)),
          orElse(probe.getSuccessThreshold(), DEFAULT_SUCCESS_THRESHOLD),
          orElse(probe.getFailureThreshold(), DEFAULT_FAILURE_THRESHOLD));
    }

    private static int orElse(Integer value, int fallback) {
      return value == null ? fallback : value;
    }
  }

  private final Check check;
  private final Timing timing;
  private final boolean staysReady;
  private final Optional<String> unsupported;
  private final AtomicBoolean inFlight = new AtomicBoolean();
  private volatile boolean ready;
  private int successes;
  private int failures;
  private Instant nextCheck;

  private Readiness(
      Check check, Timing timing, boolean staysReady, Optional<String> unsupported, Instant start) {
    this.check = check;
    this.timing = timing;
    this.staysReady = staysReady;
    this.unsupported = unsupported;
    this.ready = check == null && unsupported.isEmpty();
    this.nextCheck = start.plus(timing.initialDelay());
  }

  /**
   * Readiness of {@code container} started at {@code start} and told {@code port} (empty when its
   * image takes none).
   */
  static Readiness of(
      Container container,
      Optional<Integer> port,
      Optional<String> readyPath,
      HttpClient http,
      Instant start) {
    Probe probe = container.getReadinessProbe();
    if (probe == null) {
      if (readyPath.isPresent() && port.isPresent()) {
        return new Readiness(
            httpCheck(http, port.get(), readyPath.get()),
            Timing.READY_PATH,
            true,
            Optional.empty(),
            start);
      }
      return new Readiness(null, Timing.READY_PATH, false, Optional.empty(), start);
    }
    Timing timing = Timing.of(probe);
    if (probe.getHttpGet() != null && !"HTTPS".equals(probe.getHttpGet().getScheme())) {
      Optional<Integer> target =
          port.or(() -> declaredPort(container, probe.getHttpGet().getPort()));
      String path = probe.getHttpGet().getPath() == null ? "/" : probe.getHttpGet().getPath();
      return target.isPresent()
          ? new Readiness(
              httpCheck(http, target.get(), path), timing, false, Optional.empty(), start)
          : unsupported(
              "readiness probe port " + probe.getHttpGet().getPort() + " not found", start);
    }
    if (probe.getTcpSocket() != null) {
      Optional<Integer> target =
          port.or(() -> declaredPort(container, probe.getTcpSocket().getPort()));
      return target.isPresent()
          ? new Readiness(tcpCheck(target.get()), timing, false, Optional.empty(), start)
          : unsupported(
              "readiness probe port " + probe.getTcpSocket().getPort() + " not found", start);
    }
    return unsupported(
        "only httpGet (http) and tcpSocket readiness probes are run by this node agent", start);
  }

  boolean ready() {
    return ready;
  }

  /** Why the container can never be ready here, when its probe cannot be run. */
  Optional<String> unsupported() {
    return unsupported;
  }

  /**
   * Starts a check on {@code executor} when one is due and none is running; {@code changed} runs
   * when readiness flips. Called from the agent's sync loop only.
   */
  void checkIfDue(Instant now, Executor executor, Runnable changed) {
    if (check == null || (staysReady && ready) || now.isBefore(nextCheck)) {
      return;
    }
    if (!inFlight.compareAndSet(false, true)) {
      return;
    }
    nextCheck = now.plus(timing.period());
    executor.execute(
        () -> {
          try {
            if (record(check.passes(timing.timeout()))) {
              changed.run();
            }
          } finally {
            inFlight.set(false);
          }
        });
  }

  /** Counts one result; true when readiness flipped. */
  private synchronized boolean record(boolean passed) {
    boolean before = ready;
    if (passed) {
      failures = 0;
      successes++;
      if (successes >= timing.successThreshold()) {
        ready = true;
      }
    } else {
      successes = 0;
      failures++;
      if (failures >= timing.failureThreshold()) {
        ready = false;
      }
    }
    return ready != before;
  }

  private static Readiness unsupported(String why, Instant start) {
    return new Readiness(null, Timing.READY_PATH, false, Optional.of(why), start);
  }

  private static Check httpCheck(HttpClient http, int port, String path) {
    URI uri = URI.create("http://" + ContainerLaunch.LOOPBACK + ":" + port + path);
    return timeout -> {
      try {
        int status =
            http.send(
                    HttpRequest.newBuilder(uri).timeout(timeout).build(),
                    HttpResponse.BodyHandlers.discarding())
                .statusCode();
        return status >= FIRST_SUCCESS_STATUS && status < FIRST_FAILING_STATUS;
      } catch (IOException e) {
        return false;
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
        return false;
      }
    };
  }

  private static Check tcpCheck(int port) {
    return timeout -> {
      try (Socket socket = new Socket()) {
        socket.connect(
            new InetSocketAddress(ContainerLaunch.LOOPBACK, port), (int) timeout.toMillis());
        return true;
      } catch (IOException e) {
        return false;
      }
    };
  }

  /** A probe's port as a number, or the containerPort of the port it names. */
  private static Optional<Integer> declaredPort(Container container, IntOrString port) {
    if (port == null) {
      return Optional.empty();
    }
    if (port.getIntVal() != null) {
      return Optional.of(port.getIntVal());
    }
    if (container.getPorts() == null) {
      return Optional.empty();
    }
    return container.getPorts().stream()
        .filter(p -> port.getStrVal().equals(p.getName()))
        .map(ContainerPort::getContainerPort)
        .findFirst();
  }
}
