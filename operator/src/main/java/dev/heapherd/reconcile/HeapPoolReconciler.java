package dev.heapherd.reconcile;

import dev.heapherd.api.HeapPool;
import dev.heapherd.api.HeapPoolStatus;
import dev.heapherd.input.ErrorText;
import dev.heapherd.input.Snapshot;
import dev.heapherd.proposal.StickyProposal;
import dev.heapherd.rollout.RolloutStep;
import io.fabric8.kubernetes.client.KubernetesClientException;
import io.fabric8.kubernetes.client.utils.KubernetesSerialization;
import io.javaoperatorsdk.operator.api.reconciler.Context;
import io.javaoperatorsdk.operator.api.reconciler.ControllerConfiguration;
import io.javaoperatorsdk.operator.api.reconciler.EventSourceContext;
import io.javaoperatorsdk.operator.api.reconciler.MaxReconciliationInterval;
import io.javaoperatorsdk.operator.api.reconciler.PrimaryUpdateAndCacheUtils;
import io.javaoperatorsdk.operator.api.reconciler.Reconciler;
import io.javaoperatorsdk.operator.api.reconciler.UpdateControl;
import io.javaoperatorsdk.operator.processing.event.source.EventSource;
import java.time.Clock;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.concurrent.TimeUnit;
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
  private final ReviewPages pages;
  private WorkloadCaches caches;

  /** A reconciler measuring through {@code metrics}, keeping each pool's page in {@code pages}. */
  HeapPoolReconciler(
      MetricsSource metrics, Clock clock, OperatorMetrics meters, ReviewPages pages) {
    this.metrics = metrics;
    this.clock = clock;
    this.meters = meters;
    this.pages = pages;
  }

  @Override
  public List<EventSource<?, HeapPool>> prepareEventSources(EventSourceContext<HeapPool> context) {
    caches = new WorkloadCaches(context);
    return caches.sources();
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
    meters.retainAfterVisit(context.getPrimaryCache().list(), pool, status);
    pages.retain(
        context
            .getPrimaryCache()
            .list()
            .map(p -> ReviewPages.path(p.getMetadata().getNamespace(), p.getMetadata().getName()))
            .collect(java.util.stream.Collectors.toSet()));
    if (!JSON.asJson(status).equals(before == null ? "" : JSON.asJson(before))) {
      writeStatus(pool, status, context);
    }
    UpdateControl<HeapPool> control = UpdateControl.noUpdate();
    return rolling ? control.rescheduleAfter(ROLLING_RECHECK) : control;
  }

  /**
   * Writes {@code status} and keeps the written pool for the next visit. The status carries state
   * across visits (history, curve points, the published proposal), and the SDK does not cache a
   * status returned in an UpdateControl: a visit started by the rollout's own Deployment write
   * could read the pool from before this write and patch it back, losing the history line of a step
   * already taken. The write is a JSON Patch of the status with optimistic locking; on a conflict
   * (an admin edited the spec) the status goes onto the newer pool, as the operator is the status's
   * only writer.
   */
  private static void writeStatus(HeapPool pool, HeapPoolStatus status, Context<HeapPool> context) {
    PrimaryUpdateAndCacheUtils.patchStatusAndCacheResource(
        pool,
        context,
        current -> {
          current.setStatus(status);
          return current;
        });
  }

  /** One visit: returns whether a rollout is running, so the pool is looked at again soon. */
  private boolean visit(PoolVisit v, RolloutWriter writer, List<HeapPool> poolsOfNamespace) {
    var seen = PoolObservation.of(v, caches, poolsOfNamespace);
    if (seen.isEmpty()) {
      return false;
    }
    PoolObservation o = seen.get();
    Snapshot snapshot = metrics.measure(o.spec(), v.namespace(), o.selected().keySet(), v.now());
    String metricsHeld = v.metricsCondition(o.spec(), snapshot, o.selected().size());
    // The proposal being rolled out, or approved and not yet fully applied, stays published:
    // fresh measurements of the first changed workloads must not replace what was approved.
    boolean keep =
        o.anyInFlight()
            || StickyProposal.approvedAndPending(o.spec(), v.status().proposal, o.states());
    ProposalPublisher.publish(v, o.spec(), o.states(), o.kinds(), snapshot, keep, meters, pages);

    List<RolloutStep> steps =
        new StepTaker(writer, meters)
            .takeAllowed(v, o.spec(), o.selected(), o.states(), metricsHeld);
    return v.rolloutConditions(o.spec(), o.states(), steps);
  }
}
