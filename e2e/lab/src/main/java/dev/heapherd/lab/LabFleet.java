package dev.heapherd.lab;

import dev.heapherd.harness.PrometheusServer;
import java.io.IOException;
import java.io.PrintStream;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;

/**
 * The processes one run started: the Prometheus server and the services. Closing stops each by its
 * own handle, services first; it is safe to call twice (the shutdown hook and the normal path both
 * do).
 */
final class LabFleet implements AutoCloseable {

  /** Namespace label of every lab target, as a HeapPool in namespace {@code lab} expects. */
  static final String NAMESPACE = "lab";

  /**
   * Suffix of a service's pod label: {@code search-0} reads as pod 0 of a StatefulSet named {@code
   * search}, which is how heapherd's snapshot maps pod names to workloads.
   */
  static final String POD_SUFFIX = "-0";

  private final PrintStream err;
  private final List<ChildService> services = new ArrayList<>();
  private PrometheusServer prometheus;
  private boolean closed;

  LabFleet(PrintStream err) {
    this.err = err;
  }

  /** The pod label of {@code app}'s service. */
  static String pod(AppKind app) {
    return app.label() + POD_SUFFIX;
  }

  /** The labels Prometheus attaches to {@code app}'s series. */
  static Map<String, String> labels(AppKind app) {
    return Map.of("namespace", NAMESPACE, "pod", pod(app), "app", app.label());
  }

  synchronized void prometheus(PrometheusServer server) {
    prometheus = server;
  }

  synchronized void add(ChildService service) {
    services.add(service);
  }

  synchronized List<ChildService> services() {
    return List.copyOf(services);
  }

  /** Lists every service as a scrape target with its labels. */
  synchronized void publishTargets() throws IOException {
    List<PrometheusServer.Target> targets = new ArrayList<>();
    for (ChildService s : services) {
      targets.add(new PrometheusServer.Target("127.0.0.1:" + s.port(), labels(s.app())));
    }
    prometheus.setTargets(targets);
  }

  @Override
  public synchronized void close() {
    if (closed) {
      return;
    }
    closed = true;
    services.forEach(ChildService::terminate);
    for (ChildService service : services) {
      try {
        service.close();
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
        err.println("heapherd-lab: interrupted while stopping pid " + service.pid());
      }
    }
    if (prometheus != null) {
      prometheus.close();
    }
  }
}
