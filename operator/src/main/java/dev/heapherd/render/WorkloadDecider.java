package dev.heapherd.render;

import dev.heapherd.engine.Objective;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Quantity;
import dev.heapherd.proposal.ProposalBuilder;
import dev.heapherd.rollout.ChangeThreshold;
import dev.heapherd.rollout.PodTemplates;
import dev.heapherd.rollout.RolloutPlanner.Target;
import dev.heapherd.rollout.WorkloadState;
import io.fabric8.kubernetes.api.model.PodTemplateSpec;
import java.util.ArrayList;
import java.util.Collection;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.stream.Collectors;

/** Decides for each of the pool's workloads whether its manifest is to change, and if not why. */
final class WorkloadDecider {

  private WorkloadDecider() {}

  /**
   * A workload that is to change.
   *
   * @param now the chosen container's settings as written
   * @param next the same after resizing
   */
  record Resize(
      ManifestWorkload found,
      WorkloadState state,
      Target target,
      PodTemplates.MemorySettings now,
      PodTemplates.MemorySettings next) {

    /** Memory of all its pods after the change. */
    long nextBytes() {
      return (long) state.replicas()
          * (next.limitBytes().orElseThrow() + state.otherContainersBytes());
    }
  }

  /**
   * The decisions.
   *
   * @param resizes the workloads to change, in the order they were given
   * @param kept the workloads left as they are, and why
   */
  record Result(List<Resize> resizes, List<Renderer.Kept> kept) {
    Result {
      resizes = List.copyOf(resizes);
      kept = List.copyOf(kept);
    }
  }

  /**
   * Decides every workload of {@code found}: a held workload, or one whose heap would change by
   * less than the threshold, is kept; so is a growth the budget has no room for.
   *
   * @param states each workload's state as written, by name
   * @param proposal the proposal for the pool, with its targets and held workloads
   */
  static Result decide(
      PoolFile pool,
      List<ManifestWorkload> found,
      Map<String, WorkloadState> states,
      ProposalBuilder.Result proposal) {
    PoolFile.Rollout rollout = pool.rollout();
    Map<String, String> held = new LinkedHashMap<>();
    proposal.proposal().held.forEach(h -> held.put(h.name, h.reason));
    List<Renderer.Kept> kept = new ArrayList<>();
    List<Resize> resizes = new ArrayList<>();
    for (ManifestWorkload f : found) {
      String name = f.workload().name();
      WorkloadState state = states.get(name);
      Target target = proposal.targets().get(name);
      if (held.containsKey(name)) {
        kept.add(new Renderer.Kept(name, "held: " + held.get(name)));
        continue;
      }
      if (ChangeThreshold.heapChangePercent(state, target) == 0
          && ChangeThreshold.limitChangePercent(state, target) == 0
          && rollout.changeThresholdPercent() > 0) {
        kept.add(new Renderer.Kept(name, "already has the proposed heap"));
        continue;
      }
      Optional<String> small =
          ChangeThreshold.belowThreshold(state, target, rollout.changeThresholdPercent());
      if (small.isPresent()) {
        kept.add(new Renderer.Kept(name, small.get()));
        continue;
      }
      PodTemplateSpec template = f.workload().template();
      PodTemplateSpec resized =
          PodTemplates.resized(
              template,
              rollout.containerName(),
              rollout.jvmOptionsVariable(),
              target.heapBytes(),
              target.limitBytes(),
              rollout.setMemoryRequest(),
              rollout.setInitialHeap());
      resizes.add(
          new Resize(
              f,
              state,
              target,
              WorkloadReader.settings(template, rollout).orElseThrow(),
              WorkloadReader.settings(resized, rollout).orElseThrow()));
    }
    List<Renderer.Kept> overBudget = overBudget(pool, states.values(), resizes);
    kept.addAll(overBudget);
    Set<String> overBudgetNames =
        overBudget.stream().map(Renderer.Kept::name).collect(Collectors.toSet());
    return new Result(
        resizes.stream()
            .filter(r -> !overBudgetNames.contains(r.found().workload().name()))
            .toList(),
        kept);
  }

  /**
   * The growing workloads to hold back while the pool's pods, every change written, would need more
   * than the budget. The plan fits the budget, but changes below the threshold keep their old sizes
   * and may leave too little room. Shrinking changes count first and then the smallest growths, the
   * order in which the operator starts rollouts; surge pods are not counted, as a render has no say
   * over when the changes roll.
   */
  private static List<Renderer.Kept> overBudget(
      PoolFile pool, Collection<WorkloadState> states, List<Resize> resizes) {
    if (!(pool.objective() instanceof Objective.Budget budget)) {
      return List.of();
    }
    long committed = states.stream().mapToLong(WorkloadState::steadyBytes).sum();
    List<Resize> byGrowth =
        resizes.stream()
            .sorted(Comparator.comparingLong(r -> r.nextBytes() - r.state().steadyBytes()))
            .toList();
    List<Renderer.Kept> heldBack = new ArrayList<>();
    for (Resize r : byGrowth) {
      long next = committed - r.state().steadyBytes() + r.nextBytes();
      if (next > committed && next > budget.bytes()) {
        heldBack.add(
            new Renderer.Kept(
                r.found().workload().name(),
                "growing it would take the pool's pods to "
                    + Quantity.format(next)
                    + ", over the budget of "
                    + Quantity.format(budget.bytes())));
      } else {
        committed = next;
      }
    }
    return heldBack;
  }
}
