package dev.heapherd.metrics;

import java.net.URI;
import java.nio.file.Path;
import java.time.Duration;
import java.util.Optional;

/**
 * Where and how to reach a Prometheus HTTP API.
 *
 * @param baseUri the server, e.g. {@code http://127.0.0.1:9090}; a path prefix is kept
 * @param bearerToken sent as {@code Authorization: Bearer}, if present
 * @param caCertificate PEM file of the certificate authority to trust for https, if not the JDK's
 * @param timeout for one request, connection included
 */
public record PrometheusEndpoint(
    URI baseUri, Optional<String> bearerToken, Optional<Path> caCertificate, Duration timeout) {

  /** Default request timeout: long enough for a pool's aggregate queries, short enough to hold. */
  public static final Duration DEFAULT_TIMEOUT = Duration.ofSeconds(30);

  /** An endpoint with no authentication, the JDK's trust store and the default timeout. */
  public static PrometheusEndpoint of(URI baseUri) {
    return new PrometheusEndpoint(baseUri, Optional.empty(), Optional.empty(), DEFAULT_TIMEOUT);
  }
}
