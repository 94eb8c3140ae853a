package dev.heapherd.reconcile;

import static org.assertj.core.api.Assertions.assertThat;
import static org.awaitility.Awaitility.await;

import com.sun.net.httpserver.HttpServer;
import dev.heapherd.api.HeapPool;
import dev.heapherd.metrics.PrometheusClient;
import dev.heapherd.metrics.PrometheusEndpoint;
import io.fabric8.kubernetes.api.model.Event;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.server.mock.EnableKubernetesMockClient;
import io.fabric8.kubernetes.client.server.mock.KubernetesMockServer;
import io.fabric8.kubernetes.client.utils.Serialization;
import java.io.ByteArrayOutputStream;
import java.io.OutputStream;
import java.io.PrintStream;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.URI;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.Map;
import java.util.Optional;
import org.junit.jupiter.api.Test;

/**
 * A known bearer token never leaves the Prometheus request: a server that echoes it back in its
 * error page, and credentials in the URL, reach neither the pool's status, its events, nor the
 * operator's log.
 */
@EnableKubernetesMockClient(crud = true)
class SecretsIT {

  static KubernetesMockServer server;
  static KubernetesClient client;

  private static final String TOKEN = "tok-7c1e9a55-never-print";

  private static final String PASSWORD = "pw-41d2-never-print";

  private static final String NAMESPACE = "tidewater-secrets";

  private static final Map<String, String> LABELS = Map.of("heapherd.dev/pool", "dispatch");

  private static final Duration WAIT = Duration.ofSeconds(30);

  @Test
  void theTokenAndPasswordAppearNowhere() throws Exception {
    HttpServer prometheus =
        HttpServer.create(new InetSocketAddress(InetAddress.getLoopbackAddress(), 0), 0);
    prometheus.createContext(
        "/",
        exchange -> {
          // A proxy's page that echoes the request's headers, the token among them.
          byte[] body =
              ("<html>denied: " + exchange.getRequestHeaders() + "</html>")
                  .getBytes(StandardCharsets.UTF_8);
          exchange.sendResponseHeaders(401, body.length);
          try (OutputStream out = exchange.getResponseBody()) {
            out.write(body);
          }
        });
    prometheus.start();
    ByteArrayOutputStream log = new ByteArrayOutputStream();
    PrintStream stderr = System.err;
    System.setErr(new PrintStream(log, true, StandardCharsets.UTF_8));
    try {
      OperatorHarness.installCrd(client);
      client
          .resource(OperatorHarness.deployment(NAMESPACE, "route-planner", 2, 1024, 1400, LABELS))
          .create();
      URI uri =
          URI.create(
              "http://heapherd:" + PASSWORD + "@127.0.0.1:" + prometheus.getAddress().getPort());
      PrometheusClient prometheusClient =
          PrometheusClient.connect(
              new PrometheusEndpoint(
                  uri, Optional.of(TOKEN), Optional.empty(), Duration.ofSeconds(5)));
      try (OperatorHarness operator =
          new OperatorHarness(server, new PrometheusMetricsSource(prometheusClient, 1))) {
        client
            .resource(
                OperatorHarness.pool(
                    "apiVersion: heapherd.dev/v1alpha1\nkind: HeapPool\nmetadata:\n  name: dispatch\n"
                        + "  namespace: "
                        + NAMESPACE
                        + "\nspec:\n  mode: DryRun\n  memoryBudget: 8Gi\n  selector:\n"
                        + "    matchLabels:\n      heapherd.dev/pool: dispatch\n"))
            .create();
        await().atMost(WAIT).until(() -> statusText().contains("HTTP 401"));
      }
      String everything =
          statusText()
              + Serialization.asYaml(client.v1().events().inNamespace(NAMESPACE).list())
              + log.toString(StandardCharsets.UTF_8);
      assertThat(everything).contains("HTTP 401").doesNotContain(TOKEN).doesNotContain(PASSWORD);
      assertThat(client.v1().events().inNamespace(NAMESPACE).list().getItems())
          .extracting(Event::getMessage)
          .allSatisfy(m -> assertThat(m).doesNotContain(TOKEN));
    } finally {
      System.setErr(stderr);
      prometheus.stop(0);
    }
  }

  private static String statusText() {
    HeapPool p = client.resources(HeapPool.class).inNamespace(NAMESPACE).withName("dispatch").get();
    return p == null || p.getStatus() == null ? "" : Serialization.asYaml(p.getStatus());
  }
}
