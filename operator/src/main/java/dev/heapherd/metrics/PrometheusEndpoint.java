package dev.heapherd.metrics;

import java.io.IOException;
import java.io.InputStream;
import java.net.URI;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
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

  private static final char DELETE = 0x7f;

  /**
   * Largest token file read, our choice: a Kubernetes service account token is one or two KiB, so a
   * file past this is not a token, and a device such as /dev/zero is never read whole.
   */
  public static final int MAX_TOKEN_FILE_BYTES = 64 << 10;

  /**
   * Largest CA file read, our choice: a bundle of every public root CA is a few hundred KiB (from
   * memory), far below this.
   */
  public static final int MAX_CA_FILE_BYTES = 4 << 20;

  /** Longest timeout accepted: a query slower than ten minutes is a Prometheus in trouble. */
  public static final Duration MAX_TIMEOUT = Duration.ofMinutes(10);

  /** Validates the endpoint, so that a bad flag fails before any request with one clear line. */
  public PrometheusEndpoint {
    String scheme = baseUri.getScheme() == null ? "" : baseUri.getScheme().toLowerCase();
    if (!scheme.equals("http") && !scheme.equals("https")) {
      throw new IllegalArgumentException(
          "the Prometheus URL must start with http:// or https://, got \""
              + redacted(baseUri)
              + "\"");
    }
    if (baseUri.getHost() == null || baseUri.getHost().isEmpty()) {
      throw new IllegalArgumentException(
          "the Prometheus URL has no host: \"" + redacted(baseUri) + "\"");
    }
    if (bearerToken.isPresent()
        && (bearerToken.get().isEmpty()
            || bearerToken.get().chars().anyMatch(c -> c < ' ' || c == DELETE))) {
      // Never echoed: the text is a credential.
      throw new IllegalArgumentException(
          "the bearer token is empty or holds line breaks or control characters (not shown);"
              + " the token file must hold the token on one line");
    }
    if (timeout.isNegative() || timeout.isZero() || timeout.compareTo(MAX_TIMEOUT) > 0) {
      throw new IllegalArgumentException(
          "the timeout must be between 1 and "
              + MAX_TIMEOUT.toSeconds()
              + " seconds, got "
              + timeout.toSeconds());
    }
  }

  /** The base URL without user information, for messages and snapshot sources. */
  public String redactedUri() {
    return redacted(baseUri);
  }

  /** The URL with any user information (a password) left out, for messages. */
  public static String redacted(URI uri) {
    if (uri.getRawUserInfo() == null) {
      return uri.toString();
    }
    return uri.toString().replace(uri.getRawUserInfo() + "@", "");
  }

  /** An endpoint with no authentication, the JDK's trust store and the default timeout. */
  public static PrometheusEndpoint of(URI baseUri) {
    return new PrometheusEndpoint(baseUri, Optional.empty(), Optional.empty(), DEFAULT_TIMEOUT);
  }

  /** The token a token file holds, surrounding white space stripped, read with a size cap. */
  public static String readToken(Path file) throws IOException {
    return new String(readCapped(file, MAX_TOKEN_FILE_BYTES), StandardCharsets.UTF_8).strip();
  }

  /**
   * At most {@code maxBytes} of a regular file; longer files and anything else (a device, a folder)
   * are refused before more is read.
   */
  static byte[] readCapped(Path file, int maxBytes) throws IOException {
    if (!Files.isRegularFile(file)) {
      throw new IOException("not a regular file");
    }
    try (InputStream in = Files.newInputStream(file)) {
      byte[] bytes = in.readNBytes(maxBytes + 1);
      if (bytes.length > maxBytes) {
        throw new IOException("larger than " + (maxBytes >> 10) + " KiB");
      }
      return bytes;
    }
  }
}
