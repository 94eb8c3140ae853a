package dev.heapherd.cli;

import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.PoolFileReader;
import dev.heapherd.input.Snapshot;
import dev.heapherd.metrics.MetricsException;
import dev.heapherd.metrics.PoolMetrics;
import dev.heapherd.metrics.PrometheusClient;
import dev.heapherd.metrics.PrometheusEndpoint;
import dev.heapherd.metrics.QueryProfile;
import java.io.IOException;
import java.net.URI;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.Optional;
import picocli.CommandLine.Option;

/** Options shared by the commands that read metrics from Prometheus. */
final class MetricsOptions {

  @Option(names = "--prometheus", description = "Prometheus base URL, e.g. http://127.0.0.1:9090.")
  URI prometheus;

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

  @Option(names = "--bearer-token-file", description = "File holding a bearer token to send.")
  Path bearerTokenFile;

  @Option(names = "--ca-file", description = "PEM file of the CA to trust for https.")
  Path caFile;

  @Option(
      names = "--timeout-seconds",
      defaultValue = "30",
      description = "Timeout of one query (default: ${DEFAULT-VALUE}).")
  long timeoutSeconds;

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
      client = PrometheusClient.connect(endpoint());
    } catch (MetricsException e) {
      throw new InputException("--ca-file", "", e.getMessage());
    }
    var expected = pool.overrides().stream().map(PoolFile.Override::name).toList();
    String label = workloadLabel != null ? workloadLabel : pool.metrics().workloadLabel();
    return PoolMetrics.measure(client, queries, label, ns, window, Instant.now(), expected);
  }

  private PrometheusEndpoint endpoint() throws InputException {
    Optional<String> token = Optional.empty();
    if (bearerTokenFile != null) {
      try {
        token = Optional.of(Files.readString(bearerTokenFile).strip());
      } catch (IOException e) {
        throw new InputException(bearerTokenFile.toString(), "", "cannot read: " + e.getMessage());
      }
    }
    try {
      return new PrometheusEndpoint(
          prometheus, token, Optional.ofNullable(caFile), Duration.ofSeconds(timeoutSeconds));
    } catch (IllegalArgumentException e) {
      throw new InputException(
          e.getMessage().contains("timeout")
              ? "--timeout-seconds"
              : e.getMessage().contains("token") ? "--bearer-token-file" : "--prometheus",
          "",
          e.getMessage());
    }
  }
}
