package dev.heapherd.cli;

import dev.heapherd.input.ErrorText;
import dev.heapherd.input.InputException;
import dev.heapherd.metrics.PrometheusEndpoint;
import java.io.IOException;
import java.net.URI;
import java.nio.file.Path;
import java.time.Duration;
import java.util.Optional;
import picocli.CommandLine.Option;

/** How to reach Prometheus: the options every command that queries it shares, the operator too. */
final class PrometheusOptions {

  @Option(names = "--prometheus", description = "Prometheus base URL, e.g. http://127.0.0.1:9090.")
  URI prometheus;

  @Option(names = "--bearer-token-file", description = "File holding a bearer token to send.")
  Path bearerTokenFile;

  @Option(names = "--ca-file", description = "PEM file of the CA to trust for https.")
  Path caFile;

  @Option(
      names = "--timeout-seconds",
      defaultValue = "30",
      description = "Timeout of one query (default: ${DEFAULT-VALUE}).")
  long timeoutSeconds;

  /** The endpoint the options name, validated; the token file read with a size cap. */
  PrometheusEndpoint endpoint() throws InputException {
    Optional<String> token = Optional.empty();
    if (bearerTokenFile != null) {
      try {
        token = Optional.of(PrometheusEndpoint.readToken(bearerTokenFile));
      } catch (IOException e) {
        throw new InputException(
            "--bearer-token-file",
            "",
            ErrorText.quoted(bearerTokenFile.toString()) + ": cannot read: " + e.getMessage());
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
