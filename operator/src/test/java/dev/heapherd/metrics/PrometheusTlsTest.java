package dev.heapherd.metrics;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import com.sun.net.httpserver.HttpsConfigurator;
import com.sun.net.httpserver.HttpsServer;
import java.io.InputStream;
import java.io.OutputStream;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.URI;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.security.KeyStore;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Optional;
import java.util.concurrent.TimeUnit;
import javax.net.ssl.KeyManagerFactory;
import javax.net.ssl.SSLContext;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * https with a private certificate authority: trusted through {@code --ca-file}, refused without
 * it. The certificate is made by the JDK's own keytool.
 */
class PrometheusTlsTest {

  private static final String PASSWORD = "changeit";
  private static final Duration TIMEOUT = Duration.ofSeconds(5);

  @Test
  void trustsTheGivenCaAndRefusesAnUnknownOne(@TempDir Path dir) throws Exception {
    Path keystore = dir.resolve("server.p12");
    Path pem = dir.resolve("ca.pem");
    keytool(
        "-genkeypair",
        "-alias",
        "prometheus",
        "-keyalg",
        "RSA",
        "-keysize",
        "2048",
        "-dname",
        "CN=127.0.0.1",
        "-ext",
        "san=ip:127.0.0.1",
        "-validity",
        "2",
        "-storetype",
        "PKCS12",
        "-keystore",
        keystore.toString(),
        "-storepass",
        PASSWORD,
        "-keypass",
        PASSWORD);
    keytool(
        "-exportcert",
        "-rfc",
        "-alias",
        "prometheus",
        "-keystore",
        keystore.toString(),
        "-storepass",
        PASSWORD,
        "-file",
        pem.toString());

    HttpsServer server =
        HttpsServer.create(new InetSocketAddress(InetAddress.getLoopbackAddress(), 0), 0);
    server.setHttpsConfigurator(new HttpsConfigurator(serverContext(keystore)));
    server.createContext(
        "/api/v1/query",
        exchange -> {
          byte[] body =
              "{\"status\":\"success\",\"data\":{\"resultType\":\"scalar\",\"result\":[1,\"42\"]}}"
                  .getBytes(StandardCharsets.UTF_8);
          exchange.sendResponseHeaders(200, body.length);
          try (OutputStream out = exchange.getResponseBody()) {
            out.write(body);
          }
        });
    server.start();
    try {
      URI uri = URI.create("https://127.0.0.1:" + server.getAddress().getPort());
      PrometheusClient trusting =
          PrometheusClient.connect(
              new PrometheusEndpoint(uri, Optional.empty(), Optional.of(pem), TIMEOUT));
      assertThat(trusting.query("42", Instant.now()).samples())
          .extracting(Sample::value)
          .isEqualTo(List.of(42.0));

      PrometheusClient stranger = PrometheusClient.connect(PrometheusEndpoint.of(uri));
      assertThatThrownBy(() -> stranger.query("42", Instant.now()))
          .isInstanceOfSatisfying(
              MetricsException.class,
              e -> assertThat(e.kind()).isEqualTo(MetricsException.Kind.UNREACHABLE));
    } finally {
      server.stop(0);
    }
  }

  @Test
  void aCaFileWithoutACertificateIsRefusedClearly(@TempDir Path dir) throws Exception {
    Path empty = Files.writeString(dir.resolve("empty.pem"), "");
    assertThatThrownBy(
            () ->
                PrometheusClient.connect(
                    new PrometheusEndpoint(
                        URI.create("https://127.0.0.1:1"),
                        Optional.empty(),
                        Optional.of(empty),
                        TIMEOUT)))
        .isInstanceOf(MetricsException.class)
        .hasMessageContaining("empty.pem");
  }

  private static SSLContext serverContext(Path keystore) throws Exception {
    KeyStore store = KeyStore.getInstance("PKCS12");
    try (InputStream in = Files.newInputStream(keystore)) {
      store.load(in, PASSWORD.toCharArray());
    }
    KeyManagerFactory keys = KeyManagerFactory.getInstance(KeyManagerFactory.getDefaultAlgorithm());
    keys.init(store, PASSWORD.toCharArray());
    SSLContext context = SSLContext.getInstance("TLS");
    context.init(keys.getKeyManagers(), null, null);
    return context;
  }

  private static void keytool(String... args) throws Exception {
    List<String> command = new ArrayList<>();
    command.add(Path.of(System.getProperty("java.home"), "bin", "keytool").toString());
    command.addAll(List.of(args));
    Process process = new ProcessBuilder(command).redirectErrorStream(true).start();
    String output = new String(process.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
    assertThat(process.waitFor(60, TimeUnit.SECONDS)).isTrue();
    assertThat(process.exitValue()).as(output).isZero();
  }
}
