package dev.heapherd.cli;

import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.PoolFileReader;
import dev.heapherd.input.Snapshot;
import dev.heapherd.metrics.MetricsException;
import dev.heapherd.metrics.PoolMetrics;
import dev.heapherd.metrics.PrometheusClient;
import dev.heapherd.metrics.QueryProfile;
import java.time.Instant;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/** Options shared by the commands that read metrics from Prometheus. */
final class MetricsOptions {

  @Mixin PrometheusOptions server;

  @Option(
      names = "--namespace",
      description = "Namespace of the workloads (default: the pool's metadata.namespace).")
  String namespace;

  @Option(
      names = "--window-seconds",
      description = "Window to measure over (default: the pool's spec.metrics.windowSeconds).")
  Long windowSeconds;

  @Option(
      names = "--profile",
      description =
          "How the JVMs export metrics: micrometer, client-java or otel"
              + " (default: the pool's spec.metrics.profile).")
  String profile;

  @Option(
      names = "--workload-label",
      description =
          "Label naming each pod's workload (default: the pool's"
              + " spec.metrics.workloadLabel, else from pod names).")
  String workloadLabel;

  /** Measures the pool's namespace now; metrics failures become held workloads. */
  Snapshot measure(PoolFile pool) throws InputException {
    String ns = namespace != null ? namespace : pool.namespace();
    if (ns.isEmpty()) {
      throw new InputException("--namespace", "", "the pool has no namespace; pass --namespace");
    }
    String profileName = profile != null ? profile : pool.metrics().profile();
    QueryProfile queries =
        PoolMetrics.queries(profileName, pool.metrics())
            .orElseThrow(
                () ->
                    new InputException(
                        "--profile",
                        "",
                        "unknown profile \""
                            + profileName
                            + "\" (use micrometer, client-java or otel)"));
    long window = windowSeconds != null ? windowSeconds : pool.metrics().windowSeconds();
    if (window < PoolFileReader.MIN_WINDOW_SECONDS || window > PoolFileReader.MAX_WINDOW_SECONDS) {
      // The same range the pool file's spec.metrics.windowSeconds has, so snapshot never writes
      // what plan would refuse.
      throw new InputException(
          "--window-seconds",
          "",
          "must be between "
              + PoolFileReader.MIN_WINDOW_SECONDS
              + " and "
              + PoolFileReader.MAX_WINDOW_SECONDS
              + ", got "
              + window);
    }
    PrometheusClient client;
    try {
      client = PrometheusClient.connect(server.endpoint());
    } catch (MetricsException e) {
      throw new InputException("--ca-file", "", e.getMessage());
    }
    var expected = pool.overrides().stream().map(PoolFile.Override::name).toList();
    String label = workloadLabel != null ? workloadLabel : pool.metrics().workloadLabel();
    return PoolMetrics.measure(client, queries, label, ns, window, Instant.now(), expected);
  }
}
