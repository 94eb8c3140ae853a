package dev.heapherd.reconcile;

import dev.heapherd.api.HeapPool;
import io.fabric8.kubernetes.api.model.EventBuilder;
import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.api.model.ObjectReferenceBuilder;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.KubernetesClientException;
import java.time.Instant;
import java.util.UUID;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/** Publishes a Kubernetes Event for every decision heapherd takes on a pool or a workload. */
final class PoolEvents {

  /** The component named as the source of heapherd's events. */
  static final String COMPONENT = "heapherd";

  static final String NORMAL = "Normal";
  static final String WARNING = "Warning";

  private static final Logger LOG = LoggerFactory.getLogger(PoolEvents.class);

  private final KubernetesClient client;

  PoolEvents(KubernetesClient client) {
    this.client = client;
  }

  /**
   * Records an event about {@code about} (the pool or one of its workloads); a failure to record is
   * logged, never fatal: events explain decisions, they do not make them.
   */
  void record(HeapPool pool, HasMetadata about, String type, String reason, String message) {
    String now = Instant.now().toString();
    var event =
        new EventBuilder()
            .withNewMetadata()
            .withNamespace(pool.getMetadata().getNamespace())
            .withName(about.getMetadata().getName() + "." + UUID.randomUUID())
            .endMetadata()
            .withInvolvedObject(
                new ObjectReferenceBuilder()
                    .withApiVersion(about.getApiVersion())
                    .withKind(about.getKind())
                    .withNamespace(about.getMetadata().getNamespace())
                    .withName(about.getMetadata().getName())
                    .withUid(about.getMetadata().getUid())
                    .build())
            .withType(type)
            .withReason(reason)
            .withMessage(message)
            .withFirstTimestamp(now)
            .withLastTimestamp(now)
            .withCount(1)
            .withNewSource()
            .withComponent(COMPONENT)
            .endSource()
            .withReportingComponent(COMPONENT)
            .build();
    try {
      client.v1().events().inNamespace(pool.getMetadata().getNamespace()).resource(event).create();
    } catch (KubernetesClientException e) {
      LOG.warn("could not record event {} {}: {}", reason, message, e.getMessage());
    }
  }
}
