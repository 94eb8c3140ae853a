package dev.heapherd.reconcile;

import dev.heapherd.api.HeapPool;
import dev.heapherd.api.HeapPoolStatus;
import dev.heapherd.input.ErrorText;
import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Snapshot;
import dev.heapherd.observe.Observer;
import dev.heapherd.observe.PoolWorkload;
import dev.heapherd.proposal.ProposalBuilder;
import dev.heapherd.rollout.RolloutPlanner;
import dev.heapherd.rollout.RolloutStep;
import dev.heapherd.rollout.WorkloadState;
import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.apps.StatefulSet;
import io.fabric8.kubernetes.client.KubernetesClientException;
import io.fabric8.kubernetes.client.utils.KubernetesSerialization;
import io.javaoperatorsdk.operator.api.config.informer.InformerEventSourceConfiguration;
import io.javaoperatorsdk.operator.api.reconciler.Context;
import io.javaoperatorsdk.operator.api.reconciler.ControllerConfiguration;
import io.javaoperatorsdk.operator.api.reconciler.EventSourceContext;
import io.javaoperatorsdk.operator.api.reconciler.MaxReconciliationInterval;
import io.javaoperatorsdk.operator.api.reconciler.Reconciler;
import io.javaoperatorsdk.operator.api.reconciler.UpdateControl;
import io.javaoperatorsdk.operator.processing.event.ResourceID;
import io.javaoperatorsdk.operator.processing.event.source.EventSource;
import io.javaoperatorsdk.operator.processing.event.source.informer.InformerEventSource;
import java.time.Clock;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.OptionalLong;
import java.util.Set;
import java.util.concurrent.TimeUnit;
import java.util.stream.Collectors;
import java.util.stream.Stream;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Reconciles a HeapPool: observes its workloads and metrics, publishes a proposal, and in Apply
 * mode takes the rollout steps the planner allows. Level-triggered: every visit recomputes from
 * what the caches and Prometheus show.
 */
@ControllerConfiguration(
    maxReconciliationInterval =
        @MaxReconciliationInterval(
            interval = HeapPoolReconciler.REMEASURE_SECONDS,
            timeUnit = TimeUnit.SECONDS))
public class HeapPoolReconciler implements Reconciler<HeapPool> {

  /** How often a quiet pool is measured again: once a minute, a few scrapes apart. */
  static final long REMEASURE_SECONDS = 60;

  /** How soon a pool with a rollout running is looked at again, to catch a failing pod early. */
  static final Duration ROLLING_RECHECK = Duration.ofSeconds(5);

  /** The Degraded reason of a visit that failed in a way no check foresaw. */
  static final String UNEXPECTED_ERROR = "UnexpectedError";

  private static final Logger LOG = LoggerFactory.getLogger(HeapPoolReconciler.class);
  private static final KubernetesSerialization JSON = new KubernetesSerialization();

  private final MetricsSource metrics;
  private final Clock clock;
  private final OperatorMetrics meters;
  private InformerEventSource<Deployment, HeapPool> deployments;
  private InformerEventSource<StatefulSet, HeapPool> statefulSets;
  private InformerEventSource<Pod, HeapPool> pods;

  /** A reconciler measuring through {@code metrics}. */
  public HeapPoolReconciler(MetricsSource metrics, Clock clock, OperatorMetrics meters) {
    this.metrics = metrics;
    this.clock = clock;
    this.meters = meters;
  }

  @Override
  public List<EventSource<?, HeapPool>> prepareEventSources(EventSourceContext<HeapPool> context) {
    deployments = informer(Deployment.class, context);
    statefulSets = informer(StatefulSet.class, context);
    pods = informer(Pod.class, context);
    return List.of(deployments, statefulSets, pods);
  }

  /** Any change to a workload or pod wakes every pool of its namespace. */
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

  @Override
  public UpdateControl<HeapPool> reconcile(HeapPool pool, Context<HeapPool> context) {
    Instant now = clock.instant();
    HeapPoolStatus before = pool.getStatus();
    HeapPoolStatus status = before == null ? new HeapPoolStatus() : JSON.clone(before);
    PoolVisit visit = new PoolVisit(pool, status, now, new PoolEvents(context.getClient()));
    boolean rolling;
    try {
      rolling =
          visit(
              visit,
              new RolloutWriter(context.getClient()),
              context.getPrimaryCache().list(pool.getMetadata().getNamespace()).toList());
    } catch (KubernetesClientException e) {
      // The API server's answer (a conflict, a timeout): the framework retries with backoff.
      throw e;
    } catch (RuntimeException e) {
      // A defect or an input no check foresaw: said in the pool's status, not only in the log.
      LOG.error("pool {}/{}: unexpected error", visit.namespace(), pool.getMetadata().getName(), e);
      visit.degraded(
          UNEXPECTED_ERROR,
          ErrorText.oneLine(
              e.getClass().getSimpleName()
                  + (e.getMessage() == null ? "" : ": " + e.getMessage())
                  + "; the operator log has the details"));
      rolling = false;
    }
    status.observedGeneration = pool.getMetadata().getGeneration();
    meters.reconciled(
        visit.namespace(), pool.getMetadata().getName(), Duration.between(now, clock.instant()));
    retainMeters(context, pool, status);
    UpdateControl<HeapPool> control;
    if (JSON.asJson(status).equals(before == null ? "" : JSON.asJson(before))) {
      control = UpdateControl.noUpdate();
    } else {
      pool.setStatus(status);
      control = UpdateControl.patchStatus(pool);
    }
    return rolling ? control.rescheduleAfter(ROLLING_RECHECK) : control;
  }

  /**
   * Drops the meters of pools that no longer exist and of workloads this pool no longer proposes
   * for. Pools carry no finalizer, so a deleted pool is noticed here, at the next visit of any.
   */
  private void retainMeters(Context<HeapPool> context, HeapPool pool, HeapPoolStatus status) {
    Set<String> pools =
        context
            .getPrimaryCache()
            .list()
            .map(p -> p.getMetadata().getNamespace() + "/" + p.getMetadata().getName())
            .collect(Collectors.toSet());
    Map<String, Set<String>> workloads = new java.util.HashMap<>();
    if (status.proposal != null) {
      workloads.put(
          pool.getMetadata().getNamespace() + "/" + pool.getMetadata().getName(),
          status.proposal.workloads.stream().map(w -> w.name).collect(Collectors.toSet()));
    }
    meters.retain(pools, workloads);
  }

  /** One visit: returns whether a rollout is running, so the pool is looked at again soon. */
  private boolean visit(PoolVisit v, RolloutWriter writer, List<HeapPool> poolsOfNamespace) {
    PoolFile spec;
    try {
      spec = PoolSpecs.read(v.pool());
    } catch (InputException e) {
      v.degraded("InvalidSpec", e.getMessage());
      return false;
    }
    List<PoolWorkload> found = select(v.namespace(), spec);
    if (found.isEmpty()) {
      v.degraded(
          "NoWorkloads",
          "no Deployment or StatefulSet in namespace "
              + v.namespace()
              + " carries the labels "
              + spec.matchLabels());
      return false;
    }
    String problem = PoolChecks.containers(found, spec.rollout());
    if (!problem.isEmpty()) {
      v.degraded("WorkloadNotChangeable", problem);
      return false;
    }
    String shared = PoolChecks.sharedWithOtherPools(v.pool(), found, poolsOfNamespace);
    if (!shared.isEmpty()) {
      v.degraded("WorkloadInTwoPools", shared);
      return false;
    }
    Map<String, PoolWorkload> selected = new LinkedHashMap<>();
    found.forEach(w -> selected.put(w.name(), w));
    List<Pod> podsNow = pods.list(v.namespace()).toList();
    Map<String, WorkloadState> states = new LinkedHashMap<>();
    selected.forEach(
        (name, w) -> states.put(name, Observer.observe(w, podsNow, spec.rollout(), v.now())));

    Snapshot snapshot = metrics.measure(spec, v.namespace(), selected.keySet(), v.now());
    String metricsHeld = v.metricsCondition(spec, snapshot, selected.size());
    boolean anyInFlight = states.values().stream().anyMatch(s -> s.inFlight().isPresent());
    // The proposal being rolled out, or approved and not yet fully applied, stays published:
    // fresh measurements of the first changed workloads must not replace what was approved.
    boolean keep = anyInFlight || approvedAndPending(spec, v.status().proposal, states);
    v.propose(spec, states, kinds(selected), snapshot, keep, meters);

    List<RolloutStep> steps = List.of();
    if (spec.applies()) {
      HeapPoolStatus.Proposal p = v.status().proposal;
      var gates =
          new RolloutPlanner.Gates(
              p != null
                  && (spec.rollout().automaticApproval() || p.hash.equals(spec.approvedProposal())),
              spec.rollout().frozenAt(v.now()),
              metricsHeld,
              spec.rollout().maxRollingWorkloads(),
              spec.rollout().cooldownSeconds(),
              spec.rollout().changeThresholdPercent(),
              spec.objective() instanceof dev.heapherd.engine.Objective.Budget b
                  ? OptionalLong.of(b.bytes())
                  : OptionalLong.empty(),
              v.now());
      steps =
          RolloutPlanner.decide(
              new ArrayList<>(states.values()),
              p == null ? Map.of() : ProposalBuilder.targets(p),
              gates);
      StepTaker taker = new StepTaker(writer, meters);
      for (RolloutStep step : steps) {
        taker.take(step, v, spec, selected.get(step.workload()), states.get(step.workload()));
      }
    }
    return v.rolloutConditions(spec, states, steps);
  }

  /**
   * Apply mode with manual approval, the published proposal is the approved one, and some workload
   * it changes still waits for its change (opted-out and rolled-back ones never will).
   */
  private static boolean approvedAndPending(
      PoolFile spec, HeapPoolStatus.Proposal published, Map<String, WorkloadState> states) {
    if (!spec.applies()
        || spec.rollout().automaticApproval()
        || published == null
        || !published.hash.equals(spec.approvedProposal())) {
      return false;
    }
    return ProposalBuilder.targets(published).entrySet().stream()
        .anyMatch(
            e -> {
              WorkloadState s = states.get(e.getKey());
              return s != null
                  && !s.optedOut()
                  && !s.rolledBack()
                  && RolloutPlanner.belowThreshold(
                          s, e.getValue(), spec.rollout().changeThresholdPercent())
                      .isEmpty();
            });
  }

  /** The pool's workloads from the informer caches, sorted by name. */
  private List<PoolWorkload> select(String namespace, PoolFile spec) {
    return Stream.concat(deployments.list(namespace), statefulSets.list(namespace))
        .filter(r -> r.getMetadata().getLabels() != null)
        .filter(
            r -> r.getMetadata().getLabels().entrySet().containsAll(spec.matchLabels().entrySet()))
        .map(PoolWorkload::new)
        .sorted(java.util.Comparator.comparing(PoolWorkload::name))
        .toList();
  }

  private static Map<String, String> kinds(Map<String, PoolWorkload> selected) {
    Map<String, String> out = new LinkedHashMap<>();
    selected.forEach((n, w) -> out.put(n, w.kind()));
    return out;
  }
}
