package dev.heapherd.reconcile;

import dev.heapherd.api.HeapPoolStatus;
import dev.heapherd.api.HeapPoolStatus.MeasuredPoint;
import dev.heapherd.api.HeapPoolStatus.PredictionCheck;
import dev.heapherd.api.HeapPoolStatus.WorkloadCurve;
import dev.heapherd.engine.CurveFit;
import dev.heapherd.engine.CurvePoint;
import dev.heapherd.engine.Units;
import dev.heapherd.input.Quantity;
import dev.heapherd.input.Snapshot;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import java.util.stream.Collectors;

/**
 * Keeps each workload's measured (heap, GC time) points in the pool's status, hands them to the
 * planner, and checks every prediction once the predicted heap runs: each rollout, and each heap
 * change made by someone else, teaches the curve a new point.
 */
final class CurveHistory {

  /** Points kept per workload: enough to fit three parameters, few enough for a small status. */
  static final int MAX_POINTS = 6;

  /** One prediction checked against what was measured. */
  record Check(String workload, long heapBytes, double predicted, double observed) {}

  private CurveHistory() {}

  /** {@code snapshot} with every measured workload's earlier points from {@code status}. */
  static Snapshot withHistory(Snapshot snapshot, HeapPoolStatus status) {
    Map<String, WorkloadCurve> curves = byName(status);
    List<Snapshot.Workload> workloads = new ArrayList<>();
    for (Snapshot.Workload w : snapshot.workloads()) {
      WorkloadCurve curve = curves.get(w.name());
      List<CurvePoint> earlier = new ArrayList<>();
      if (curve != null) {
        for (MeasuredPoint p : curve.points) {
          // Today's measurement stands for its own heap; an older point there is superseded.
          if (!CurveFit.sameHeap(p.heapBytes, w.heapMaxBytes()) && p.liveBytes < p.heapBytes) {
            earlier.add(
                new CurvePoint(
                    p.heapBytes, p.liveBytes, p.youngGcSecondsPerSecond, p.oldGcSecondsPerSecond));
          }
        }
      }
      workloads.add(w.withLayout(w.layout().withHistory(earlier)));
    }
    return new Snapshot(
        snapshot.capturedAt(), snapshot.windowSeconds(), workloads, snapshot.held());
  }

  /**
   * Records today's measurement of every measured workload as the point of its heap, drops curves
   * of workloads the pool no longer has, and checks expectations whose heap now runs.
   */
  static List<Check> record(HeapPoolStatus status, Snapshot snapshot, Instant now) {
    Map<String, WorkloadCurve> curves = byName(status);
    Set<String> present =
        snapshot.workloads().stream().map(Snapshot.Workload::name).collect(Collectors.toSet());
    snapshot.held().forEach(h -> present.add(h.name()));
    curves.keySet().retainAll(present);
    List<Check> checks = new ArrayList<>();
    for (Snapshot.Workload w : snapshot.workloads()) {
      WorkloadCurve curve = curves.computeIfAbsent(w.name(), CurveHistory::curve);
      // A point is renewed once per metrics window: each window is one independent measurement,
      // and renewing it on every visit would rewrite the status for nothing.
      Instant renewAfter = now.minusSeconds(snapshot.windowSeconds());
      boolean fresh =
          curve.points.stream()
              .anyMatch(
                  p ->
                      CurveFit.sameHeap(p.heapBytes, w.heapMaxBytes())
                          && Instant.parse(p.measuredAt).isAfter(renewAfter));
      if (!fresh) {
        curve.points.removeIf(p -> CurveFit.sameHeap(p.heapBytes, w.heapMaxBytes()));
        curve.points.add(point(w, now));
      }
      while (curve.points.size() > MAX_POINTS) {
        curve.points.remove(0);
      }
      PredictionCheck expected = curve.expected;
      if (expected != null && CurveFit.sameHeap(expected.heapBytes, w.heapMaxBytes())) {
        double observed = w.replicas() * w.gcSecondsPerSecond() * Units.SECONDS_PER_HOUR;
        expected.observedGcSecondsPerHour = observed;
        expected.time = now.toString();
        curve.lastCheck = expected;
        curve.expected = null;
        checks.add(
            new Check(w.name(), expected.heapBytes, expected.predictedGcSecondsPerHour, observed));
      }
    }
    status.curves = new ArrayList<>(curves.values());
    if (!checks.isEmpty()) {
      PredictionCheck pool = new PredictionCheck();
      pool.predictedGcSecondsPerHour = checks.stream().mapToDouble(Check::predicted).sum();
      pool.observedGcSecondsPerHour = checks.stream().mapToDouble(Check::observed).sum();
      pool.time = now.toString();
      status.lastPredictionCheck = pool;
    }
    return checks;
  }

  /** Remembers the GC time the published proposal predicts for every heap it changes. */
  static void expect(HeapPoolStatus status) {
    if (status.proposal == null) {
      return;
    }
    Map<String, WorkloadCurve> curves = byName(status);
    for (var w : status.proposal.workloads) {
      WorkloadCurve curve = curves.get(w.name);
      long proposed = Quantity.parseBytes(w.proposedHeap);
      if (curve == null || CurveFit.sameHeap(proposed, Quantity.parseBytes(w.currentHeap))) {
        continue;
      }
      if (curve.expected == null || !CurveFit.sameHeap(curve.expected.heapBytes, proposed)) {
        PredictionCheck expected = new PredictionCheck();
        expected.heapBytes = proposed;
        expected.predictedGcSecondsPerHour = Double.parseDouble(w.gcSecondsPerHourAfter);
        curve.expected = expected;
      }
    }
  }

  private static Map<String, WorkloadCurve> byName(HeapPoolStatus status) {
    // Sorted, so an unchanged history writes an unchanged status.
    Map<String, WorkloadCurve> out = new TreeMap<>();
    if (status.curves != null) {
      status.curves.forEach(c -> out.put(c.name, c));
    }
    return out;
  }

  private static WorkloadCurve curve(String name) {
    WorkloadCurve c = new WorkloadCurve();
    c.name = name;
    return c;
  }

  private static MeasuredPoint point(Snapshot.Workload w, Instant now) {
    CurvePoint p = w.point();
    MeasuredPoint out = new MeasuredPoint();
    out.heapBytes = p.heapBytes();
    out.liveBytes = p.liveBytes();
    out.youngGcSecondsPerSecond = p.youngGcSecondsPerSecond();
    out.oldGcSecondsPerSecond = p.oldGcSecondsPerSecond();
    out.measuredAt = now.toString();
    return out;
  }
}
