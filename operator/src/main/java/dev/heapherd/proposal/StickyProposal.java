package dev.heapherd.proposal;

import dev.heapherd.api.HeapPoolStatus;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Quantity;
import dev.heapherd.rollout.ChangeThreshold;
import dev.heapherd.rollout.WorkloadState;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import java.util.stream.Collectors;

/** Which proposal a pool publishes when a fresh one is computed. */
public final class StickyProposal {

  private StickyProposal() {}

  /**
   * The proposal to publish: the previous one while every workload's new heap is within {@code
   * thresholdPercent} of it, so an approved hash survives the noise of fresh measurements.
   */
  public static HeapPoolStatus.Proposal choose(
      HeapPoolStatus.Proposal previous, HeapPoolStatus.Proposal fresh, long thresholdPercent) {
    if (previous == null || previous.hash == null) {
      return fresh;
    }
    Map<String, Long> old = heaps(previous);
    Map<String, Long> now = heaps(fresh);
    if (!old.keySet().equals(now.keySet())) {
      return fresh;
    }
    for (var e : now.entrySet()) {
      if (ChangeThreshold.changePercent(old.get(e.getKey()), e.getValue()) >= thresholdPercent) {
        return fresh;
      }
    }
    if (!sameHeld(previous, fresh)) {
      return fresh;
    }
    return previous;
  }

  /**
   * Apply mode with manual approval, the published proposal is the approved one, and some workload
   * it changes still waits for its change (opted-out and rolled-back ones never will): the pool
   * keeps publishing it until the rollout is done, whatever fresh measurements say.
   */
  public static boolean approvedAndPending(
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
                  && ChangeThreshold.belowThreshold(
                          s, e.getValue(), spec.rollout().changeThresholdPercent())
                      .isEmpty();
            });
  }

  private static Map<String, Long> heaps(HeapPoolStatus.Proposal p) {
    Map<String, Long> out = new TreeMap<>();
    p.workloads.forEach(w -> out.put(w.name, Quantity.parseBytes(w.proposedHeap)));
    return out;
  }

  private static boolean sameHeld(HeapPoolStatus.Proposal a, HeapPoolStatus.Proposal b) {
    Set<String> x = a.held.stream().map(h -> h.name).collect(Collectors.toSet());
    Set<String> y = b.held.stream().map(h -> h.name).collect(Collectors.toSet());
    return x.equals(y);
  }
}
