package dev.heapherd.nodeagent;

import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.authentication.TokenRequest;
import io.fabric8.kubernetes.api.model.authentication.TokenRequestBuilder;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.KubernetesClientException;
import java.io.IOException;
import java.net.URI;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.attribute.PosixFilePermissions;
import java.util.Base64;
import java.util.Optional;

/**
 * Gives a pod's processes the API credentials of its service account, as the kubelet's projected
 * token volume does: a token bound to the pod from the TokenRequest API, written into a kubeconfig
 * in the pod's folder that a jar finds through {@code KUBECONFIG}, or the token files an image
 * finds where the pod mounts its token (see {@link RootFilesystem}). Processes then act with
 * exactly the rights RBAC grants that service account.
 */
final class ServiceAccountCredentials {

  /** The variable Kubernetes clients read a kubeconfig path from. */
  static final String KUBECONFIG = "KUBECONFIG";

  /**
   * Token lifetime: one hour, the kubelet's default for projected service-account tokens
   * (Kubernetes documentation, "Service account token volume projection"). Pods of these tests live
   * shorter; a longer-lived pod would need the agent to refresh it.
   */
  private static final long TOKEN_SECONDS = 3600;

  private final KubernetesClient client;

  ServiceAccountCredentials(KubernetesClient client) {
    this.client = client;
  }

  /** A token bound to a pod, and what a client needs besides to reach the API server with it. */
  record Token(
      String token, Optional<String> caBase64, String masterUrl, String namespace, String account) {

    /** The API server's host, as in-cluster clients read it from KUBERNETES_SERVICE_HOST. */
    String apiHost() {
      return URI.create(masterUrl).getHost();
    }

    /** The API server's port (443 when the URL names none). */
    int apiPort() {
      int port = URI.create(masterUrl).getPort();
      return port < 0 ? HTTPS_PORT : port;
    }
  }

  /** The port https uses when a URL names none (RFC 9110). */
  private static final int HTTPS_PORT = 443;

  /**
   * A token for the pod's service account; empty when the pod opts out of one ({@code
   * automountServiceAccountToken: false}).
   */
  Optional<Token> request(Pod pod) throws IOException {
    if (Boolean.FALSE.equals(pod.getSpec().getAutomountServiceAccountToken())) {
      return Optional.empty();
    }
    String account = Optional.ofNullable(pod.getSpec().getServiceAccountName()).orElse("default");
    TokenRequest request =
        new TokenRequestBuilder()
            .withNewSpec()
            .withExpirationSeconds(TOKEN_SECONDS)
            .withNewBoundObjectRef()
            .withApiVersion("v1")
            .withKind("Pod")
            .withName(pod.getMetadata().getName())
            .withUid(pod.getMetadata().getUid())
            .endBoundObjectRef()
            .endSpec()
            .build();
    String token;
    try {
      token =
          client
              .serviceAccounts()
              .inNamespace(pod.getMetadata().getNamespace())
              .withName(account)
              .tokenRequest(request)
              .getStatus()
              .getToken();
    } catch (KubernetesClientException e) {
      throw new IOException("no token for service account " + account + ": " + e.getMessage(), e);
    }
    var config = client.getConfiguration();
    String ca = config.getCaCertData();
    if (ca == null && config.getCaCertFile() != null) {
      ca = Base64.getEncoder().encodeToString(Files.readAllBytes(Path.of(config.getCaCertFile())));
    }
    return Optional.of(
        new Token(
            token,
            Optional.ofNullable(ca),
            config.getMasterUrl(),
            pod.getMetadata().getNamespace(),
            account));
  }

  /** Writes a kubeconfig holding {@code token} into {@code podDir}, for jars to find by path. */
  static Path writeKubeconfig(Token token, Path podDir) throws IOException {
    String kubeconfig =
        String.join(
            "\n",
            "apiVersion: v1",
            "kind: Config",
            "clusters:",
            "- name: cluster",
            "  cluster:",
            "    server: " + token.masterUrl(),
            // Without a CA of its own the client trusts the system's CAs, as the agent does.
            token.caBase64().map(ca -> "    certificate-authority-data: " + ca).orElse(""),
            "users:",
            "- name: " + token.account(),
            "  user:",
            "    token: " + token.token(),
            "contexts:",
            "- name: pod",
            "  context:",
            "    cluster: cluster",
            "    user: " + token.account(),
            "    namespace: " + token.namespace(),
            "current-context: pod",
            "");
    Path file = podDir.resolve("kubeconfig");
    Files.writeString(file, kubeconfig, StandardCharsets.UTF_8);
    // Only the agent's user may read a credential, as with a projected token's default mode.
    Files.setPosixFilePermissions(file, PosixFilePermissions.fromString("rw-------"));
    return file;
  }
}
