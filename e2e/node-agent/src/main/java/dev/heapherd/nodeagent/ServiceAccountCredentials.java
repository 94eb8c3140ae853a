package dev.heapherd.nodeagent;

import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.authentication.TokenRequest;
import io.fabric8.kubernetes.api.model.authentication.TokenRequestBuilder;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.KubernetesClientException;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.attribute.PosixFilePermissions;
import java.util.Base64;
import java.util.Optional;

/**
 * Gives a pod's processes the API credentials of its service account, as the kubelet's projected
 * token volume does: a token bound to the pod from the TokenRequest API, written into a kubeconfig
 * in the pod's folder that the process finds through {@code KUBECONFIG}. Processes then act with
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

  /**
   * Writes the pod's kubeconfig into {@code podDir}; empty when the pod opts out of a token ({@code
   * automountServiceAccountToken: false}).
   */
  Optional<Path> write(Pod pod, Path podDir) throws IOException {
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
    String kubeconfig =
        String.join(
            "\n",
            "apiVersion: v1",
            "kind: Config",
            "clusters:",
            "- name: cluster",
            "  cluster:",
            "    server: " + config.getMasterUrl(),
            // Without a CA of its own the client trusts the system's CAs, as the agent does.
            ca == null ? "" : "    certificate-authority-data: " + ca,
            "users:",
            "- name: " + account,
            "  user:",
            "    token: " + token,
            "contexts:",
            "- name: pod",
            "  context:",
            "    cluster: cluster",
            "    user: " + account,
            "    namespace: " + pod.getMetadata().getNamespace(),
            "current-context: pod",
            "");
    Path file = podDir.resolve("kubeconfig");
    Files.writeString(file, kubeconfig, StandardCharsets.UTF_8);
    // Only the agent's user may read a credential, as with a projected token's default mode.
    Files.setPosixFilePermissions(file, PosixFilePermissions.fromString("rw-------"));
    return Optional.of(file);
  }
}
