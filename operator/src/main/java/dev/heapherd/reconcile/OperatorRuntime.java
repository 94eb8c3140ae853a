package dev.heapherd.reconcile;

import io.fabric8.kubernetes.client.KubernetesClient;
import io.javaoperatorsdk.operator.Operator;
import io.javaoperatorsdk.operator.api.config.LeaderElectionConfiguration;
import io.javaoperatorsdk.operator.monitoring.micrometer.MicrometerMetrics;
import io.micrometer.core.instrument.MeterRegistry;
import java.time.Clock;
import java.time.Duration;
import java.util.Optional;
import java.util.Set;

/** The running operator: the SDK's machinery wired to the HeapPool reconciler. */
public final class OperatorRuntime implements AutoCloseable {

  /** Name of the Lease two replicas compete for. */
  public static final String LEASE_NAME = "heapherd-leader";

  private final Operator operator;
  private final ReviewPages pages;

  /**
   * What to run.
   *
   * @param namespaces namespaces to watch; empty: all
   * @param leaseNamespace where the leader-election Lease lives; empty: no leader election
   * @param exitOnLostLease end the process when leadership is lost, so a replica that lost its
   *     Lease never reconciles beside the new leader; tests that stop and restart in one JVM turn
   *     it off
   */
  public record Settings(
      Set<String> namespaces, Optional<String> leaseNamespace, boolean exitOnLostLease) {}

  /**
   * Lease timings: the client library's usual 15 s lease, renewed within 10 s, retried every 2 s
   * (the defaults of the operator SDK's leader election).
   */
  public static final Duration LEASE_DURATION = Duration.ofSeconds(15);

  private static final Duration RENEW_DEADLINE = Duration.ofSeconds(10);
  public static final Duration RETRY_PERIOD = Duration.ofSeconds(2);

  /**
   * How long a stop waits for running reconciles: our choice, well inside a pod's default 30 s
   * termination grace (Kubernetes pod documentation).
   */
  private static final Duration RECONCILE_STOP_WAIT = Duration.ofSeconds(5);

  private OperatorRuntime(Operator operator, ReviewPages pages) {
    this.operator = operator;
    this.pages = pages;
  }

  /** Starts reconciling; returns once the informers have synced. */
  public static OperatorRuntime start(
      KubernetesClient client, MetricsSource metrics, MeterRegistry registry, Settings settings) {
    Operator operator =
        new Operator(
            o -> {
              o.withKubernetesClient(client)
                  // Status is ours alone, so a JSON merge patch of it is exact; it also works
                  // where server-side apply does not, such as Fabric8's mock server.
                  .withUseSSAToPatchPrimaryResource(false)
                  .withCloseClientOnStop(true)
                  // Reconciles are idempotent, so a stop need not wait long for one to finish;
                  // this keeps shutdown inside a pod's termination grace.
                  .withReconciliationTerminationTimeout(RECONCILE_STOP_WAIT)
                  // The SDK's own meters (reconciles, events, failures) beside ours. Per
                  // resource meters would outlive a deleted pool: the SDK drops them only on
                  // cleanup, which pools without a finalizer never get.
                  .withMetrics(MicrometerMetrics.withoutPerResourceMetrics(registry));
              settings
                  .leaseNamespace()
                  .ifPresent(
                      ns ->
                          o.withLeaderElectionConfiguration(
                              new LeaderElectionConfiguration(
                                  LEASE_NAME,
                                  ns,
                                  LEASE_DURATION,
                                  RENEW_DEADLINE,
                                  RETRY_PERIOD,
                                  null,
                                  null,
                                  settings.exitOnLostLease())));
            });
    OperatorMetrics meters = new OperatorMetrics();
    meters.bindTo(registry);
    ReviewPages pages = new ReviewPages();
    var reconciler = new HeapPoolReconciler(metrics, Clock.systemUTC(), meters, pages);
    if (settings.namespaces().isEmpty()) {
      operator.register(reconciler);
    } else {
      operator.register(reconciler, c -> c.settingNamespaces(settings.namespaces()));
    }
    operator.start();
    return new OperatorRuntime(operator, pages);
  }

  /**
   * The operator has started: leading, or standing by for the Lease. A standby counts as ready so a
   * rolling update of the operator itself can finish while the old replica still leads; informer
   * failures are logged by the SDK and retried.
   */
  public boolean healthy() {
    return operator.getRuntimeInfo().isStarted();
  }

  /**
   * The review page served at {@code path} ({@code /pools/NAMESPACE/NAME}, as the pool's
   * status.reviewPage says), if that pool has one.
   */
  public Optional<String> reviewPage(String path) {
    return pages.at(path);
  }

  /** Where review pages are served on the operator's HTTP port. */
  public static String reviewPagesPrefix() {
    return ReviewPages.PREFIX;
  }

  @Override
  public void close() {
    operator.stop();
  }
}
