package dev.heapherd.reconcile;

import dev.heapherd.api.HeapPool;
import dev.heapherd.input.PoolFile;
import dev.heapherd.observe.PoolWorkload;
import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.apps.StatefulSet;
import io.fabric8.kubernetes.client.informers.cache.BasicItemStore;
import io.fabric8.kubernetes.client.informers.cache.Cache;
import io.fabric8.kubernetes.client.informers.cache.ItemStore;
import io.fabric8.kubernetes.client.informers.cache.ReducedStateItemStore;
import io.fabric8.kubernetes.client.utils.KubernetesSerialization;
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
 * from; any change to one of them wakes every pool of its namespace. They keep only what the
 * operator reads: workloads without their managedFields, pods reduced to the few fields the
 * observer looks at (docs/operating.md, "Memory").
 */
final class WorkloadCaches {

  private final InformerEventSource<Deployment, HeapPool> deployments;
  private final InformerEventSource<StatefulSet, HeapPool> statefulSets;
  private final InformerEventSource<Pod, HeapPool> pods;

  /**
   * The pod fields the observer reads (labels to match a workload, deletion, the containers' env
   * and resources, readiness and container states); the store keeps the key and resourceVersion.
   */
  static final String[] POD_FIELDS = {
    "metadata.labels",
    "metadata.deletionTimestamp",
    "spec.containers",
    "status.conditions",
    "status.containerStatuses"
  };

  /**
   * Objects per page of an informer's first list, so that start-up does not hold a whole cluster's
   * pods in one answer; the API server's own paging (Kubernetes API concepts, "Retrieving large
   * results sets in chunks"), 500 being kubectl's default chunk size (from memory).
   */
  static final long LIST_PAGE = 500;

  private static final KubernetesSerialization SERIALIZATION = new KubernetesSerialization();

  WorkloadCaches(EventSourceContext<HeapPool> context) {
    // A store is shared by the informers of every watched namespace, and an informer's relist
    // drops what its own list lacks from the whole store; so only one informer (all namespaces)
    // may have a store of ours.
    boolean oneInformer =
        context.getControllerConfiguration().getInformerConfig().watchAllNamespaces();
    deployments =
        informer(Deployment.class, context, oneInformer ? new WithoutManagedFields<>() : null);
    statefulSets =
        informer(StatefulSet.class, context, oneInformer ? new WithoutManagedFields<>() : null);
    pods =
        informer(
            Pod.class,
            context,
            oneInformer
                ? new ReducedStateItemStore<>(
                    ReducedStateItemStore.NAME_KEY_STATE, Pod.class, SERIALIZATION, POD_FIELDS)
                : null);
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
      Class<R> type, EventSourceContext<HeapPool> context, ItemStore<R> store) {
    var builder = InformerEventSourceConfiguration.from(type, HeapPool.class);
    if (store != null) {
      builder = builder.withItemStore(store);
    }
    var config =
        builder
            .withInformerListLimit(LIST_PAGE)
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

  /**
   * Keeps whole workloads but their managedFields, often the larger part of an object. The operator
   * writes workloads back with a full update; one without managedFields leaves the server's
   * unchanged (Kubernetes documentation, Server-Side Apply, "Clearing managedFields").
   */
  static final class WithoutManagedFields<R extends HasMetadata> implements ItemStore<R> {

    private final BasicItemStore<R> items = new BasicItemStore<>(Cache::metaNamespaceKeyFunc);

    @Override
    public String getKey(R item) {
      return items.getKey(item);
    }

    @Override
    public R put(String key, R item) {
      item.getMetadata().setManagedFields(null);
      return items.put(key, item);
    }

    @Override
    public R remove(String key) {
      return items.remove(key);
    }

    @Override
    public Stream<String> keySet() {
      return items.keySet();
    }

    @Override
    public Stream<R> values() {
      return items.values();
    }

    @Override
    public int size() {
      return items.size();
    }

    @Override
    public R get(String key) {
      return items.get(key);
    }
  }
}
