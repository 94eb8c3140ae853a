package dev.heapherd.reconcile;

import io.fabric8.kubernetes.api.model.Condition;
import io.fabric8.kubernetes.api.model.ConditionBuilder;
import java.time.Instant;
import java.util.List;
import java.util.Objects;

/** Sets conditions the Kubernetes way: keyed by type, transition time kept while unchanged. */
final class Conditions {

  static final String READY = "Ready";
  static final String METRICS_AVAILABLE = "MetricsAvailable";
  static final String BUDGET_FEASIBLE = "BudgetFeasible";
  static final String PROPOSAL_READY = "ProposalReady";
  static final String ROLLOUT_IN_PROGRESS = "RolloutInProgress";
  static final String DEGRADED = "Degraded";

  /** Every type, in the order status lists them; each is set on every visit. */
  static final List<String> TYPES =
      List.of(
          READY, METRICS_AVAILABLE, BUDGET_FEASIBLE, PROPOSAL_READY, ROLLOUT_IN_PROGRESS, DEGRADED);

  static final String TRUE = "True";
  static final String FALSE = "False";
  static final String UNKNOWN = "Unknown";

  private Conditions() {}

  /** Sets one condition in {@code conditions}, in place. */
  static void set(
      List<Condition> conditions,
      String type,
      String status,
      String reason,
      String message,
      long generation,
      Instant now) {
    Condition old =
        conditions.stream().filter(c -> type.equals(c.getType())).findFirst().orElse(null);
    String since =
        old != null && Objects.equals(old.getStatus(), status)
            ? old.getLastTransitionTime()
            : now.toString();
    Condition fresh =
        new ConditionBuilder()
            .withType(type)
            .withStatus(status)
            .withReason(reason)
            .withMessage(message)
            .withObservedGeneration(generation)
            .withLastTransitionTime(since)
            .build();
    conditions.removeIf(c -> type.equals(c.getType()));
    conditions.add(fresh);
    conditions.sort(java.util.Comparator.comparingInt(c -> TYPES.indexOf(c.getType())));
  }

  /** The condition of {@code type}, if set. */
  static java.util.Optional<Condition> get(List<Condition> conditions, String type) {
    return conditions.stream().filter(c -> type.equals(c.getType())).findFirst();
  }
}
