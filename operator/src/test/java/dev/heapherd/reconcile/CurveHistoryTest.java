package dev.heapherd.reconcile;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.heapherd.api.HeapPoolStatus;
import dev.heapherd.input.Snapshot;
import java.time.Instant;
import java.util.List;
import org.junit.jupiter.api.Test;

/** Points of each workload's curve kept in the status, and predictions checked against them. */
class CurveHistoryTest {

  private static final Instant START = Instant.parse("2026-12-01T08:00:00Z");

  private static Snapshot snapshot(long heapMib, double gcPercent) {
    return new Snapshot(
        START, 3600, List.of(FakeMetrics.jvm("ledger", 2, heapMib, 300, gcPercent)), List.of());
  }

  private static HeapPoolStatus.ProposedWorkload proposed(long fromMib, long toMib, String after) {
    var w = new HeapPoolStatus.ProposedWorkload();
    w.name = "ledger";
    w.currentHeap = fromMib + "Mi";
    w.proposedHeap = toMib + "Mi";
    w.gcSecondsPerHourAfter = after;
    return w;
  }

  @Test
  void aRolloutAddsAPointAndChecksThePrediction() {
    HeapPoolStatus status = new HeapPoolStatus();
    assertThat(CurveHistory.record(status, snapshot(1024, 4), START)).isEmpty();
    status.proposal = new HeapPoolStatus.Proposal();
    status.proposal.workloads.add(proposed(1024, 1536, "300.0"));
    CurveHistory.expect(status);

    // Renewed within the window: the point stays as it was, so the status does not churn.
    CurveHistory.record(status, snapshot(1024, 5), START.plusSeconds(60));
    assertThat(status.curves.get(0).points).hasSize(1);
    assertThat(status.curves.get(0).points.get(0).oldGcSecondsPerSecond)
        .isCloseTo(0.036, within(1e-12));

    Instant later = START.plusSeconds(7200);
    List<CurveHistory.Check> checks = CurveHistory.record(status, snapshot(1536, 2), later);
    // Two pods at 2 % GC: 2 x 0.02 x 3600 s per hour.
    assertThat(checks).containsExactly(new CurveHistory.Check("ledger", 1536L << 20, 300.0, 144.0));
    assertThat(status.lastPredictionCheck.observedGcSecondsPerHour).isEqualTo(144.0);
    assertThat(status.curves.get(0).points).hasSize(2);
    assertThat(status.curves.get(0).expected).isNull();

    // The next plan sees the earlier heap as history and today's as its own measurement.
    Snapshot learned = CurveHistory.withHistory(snapshot(1536, 2), status);
    assertThat(learned.workloads().get(0).layout().history())
        .singleElement()
        .satisfies(p -> assertThat(p.heapBytes()).isEqualTo(1024L << 20));
  }

  @Test
  void keepsAFewPointsAndForgetsWorkloadsThePoolNoLongerHas() {
    HeapPoolStatus status = new HeapPoolStatus();
    for (int i = 0; i < CurveHistory.MAX_POINTS + 3; i++) {
      CurveHistory.record(status, snapshot(1024 + 200L * i, 3), START.plusSeconds(7200L * i));
    }
    assertThat(status.curves.get(0).points).hasSize(CurveHistory.MAX_POINTS);
    CurveHistory.record(status, new Snapshot(START, 3600, List.of(), List.of()), START);
    assertThat(status.curves).isEmpty();
  }
}
