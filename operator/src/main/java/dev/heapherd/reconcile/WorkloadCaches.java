package dev.heapherd.reconcile;

import dev.heapherd.api.HeapPool;
import dev.heapherd.input.PoolFile;
import dev.heapherd.observe.PoolWorkload;
import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.apps.StatefulSet;
import io.javaoperatorsdk.operator.api.config.informer.InformerEventSourceConfiguration;
import io.javaoperatorsdk.operator.api.reconciler.EventSourceContext;
import io.javaoperatorsdk.operator.processing.event.ResourceID;
import io.javaoperatorsdk.operator.processing.event.source.EventSource;
import io.javaoperatorsdk.operator.processing.event.source.informer.InformerEventSource;
import java.util.Comparator;
import java.util.List;
import java.util.stream.Collectors;
import java.util.stream.Stream;

/**
 * The informer caches of Deployments, StatefulSets and Pods the operator reads pools' workloads
 * from; any change to one of them wakes every pool of its namespace.
 */
final class WorkloadCaches {

  private final InformerEventSource<Deployment, HeapPool> deployments;
  private final InformerEventSource<StatefulSet, HeapPool> statefulSets;
  private final InformerEventSource<Pod, HeapPool> pods;

  WorkloadCaches(EventSourceContext<HeapPool> context) {
    deployments = informer(Deployment.class, context);
    statefulSets = informer(StatefulSet.class, context);
    pods = informer(Pod.class, context);
  }

  /** The event sources to register with the operator SDK. */
  List<EventSource<?, HeapPool>> sources() {
    return List.of(deployments, statefulSets, pods);
  }

  /** The pool's workloads: those of its namespace carrying its labels, sorted by name. */
  List<PoolWorkload> select(String namespace, PoolFile spec) {
    return Stream.concat(deployments.list(namespace), statefulSets.list(namespace))
        .filter(r -> r.getMetadata().getLabels() != null)
        .filter(
            r -> r.getMetadata().getLabels().entrySet().containsAll(spec.matchLabels().entrySet()))
        .map(PoolWorkload::new)
        .sorted(Comparator.comparing(PoolWorkload::name))
        .toList();
  }

  /** Every pod of the namespace. */
  List<Pod> pods(String namespace) {
    return pods.list(namespace).toList();
  }

  private static <R extends HasMetadata> InformerEventSource<R, HeapPool> informer(
      Class<R> type, EventSourceContext<HeapPool> context) {
    var config =
        InformerEventSourceConfiguration.from(type, HeapPool.class)
            .withSecondaryToPrimaryMapper(
                (R r) ->
                    context
                        .getPrimaryCache()
                        .list(r.getMetadata().getNamespace())
                        .map(ResourceID::fromResource)
                        .collect(Collectors.toSet()))
            .build();
    return new InformerEventSource<>(config, context);
  }
}
