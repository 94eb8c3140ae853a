package dev.heapherd.plan;

import dev.heapherd.engine.Allocator;
import dev.heapherd.engine.CurveFit;
import dev.heapherd.engine.CurvePoint;
import dev.heapherd.engine.GcConstants;
import dev.heapherd.engine.GcModel;
import dev.heapherd.engine.GcObservation;
import dev.heapherd.engine.Objective;
import dev.heapherd.engine.PoolPlan;
import dev.heapherd.engine.Workload;
import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Snapshot;
import dev.heapherd.input.WorkloadSettings;
import java.util.ArrayList;
import java.util.List;
import java.util.Set;
import java.util.stream.Collectors;

/** Joins a pool file and a snapshot into the engine's inputs and plans the pool. */
public final class Planner {

  /** The collector whose history is fitted on the old generation's headroom alone. */
  private static final String G1 = "G1";

  private Planner() {}

  /**
   * Plans {@code pool} from {@code snapshot}, the whole budget for the measured workloads but what
   * the held ones keep.
   *
   * @param poolFileName names the pool file in errors
   * @param snapshotFileName names the snapshot file in errors
   */
  public static PoolPlan plan(
      PoolFile pool, String poolFileName, Snapshot snapshot, String snapshotFileName)
      throws InputException {
    return plan(pool, poolFileName, snapshot, snapshotFileName, 0);
  }

  /**
   * Plans {@code pool} from {@code snapshot} with {@code reservedBytes} of the budget kept for
   * memory the plan does not size (sidecar containers, surge pods); every deduction from the budget
   * is made here, at once.
   */
  public static PoolPlan plan(
      PoolFile pool,
      String poolFileName,
      Snapshot snapshot,
      String snapshotFileName,
      long reservedBytes)
      throws InputException {
    Set<String> measured =
        snapshot.workloads().stream().map(Snapshot.Workload::name).collect(Collectors.toSet());
    snapshot.held().forEach(h -> measured.add(h.name()));
    for (int i = 0; i < pool.overrides().size(); i++) {
      String name = pool.overrides().get(i).name();
      if (!measured.contains(name)) {
        throw new InputException(
            poolFileName,
            "spec.overrides[" + i + "].name",
            "workload \"" + name + "\" is not in the snapshot " + snapshotFileName);
      }
    }
    if (snapshot.workloads().isEmpty()) {
      throw new InputException(
          snapshotFileName,
          "workloads",
          "no workload was measured well enough to plan; held: "
              + snapshot.held().stream()
                  .map(h -> h.name() + " (" + h.reason() + ")")
                  .collect(Collectors.joining(", ")));
    }
    try {
      return Allocator.plan(
          workloads(pool, snapshot), available(pool.objective(), snapshot, reservedBytes));
    } catch (IllegalArgumentException e) {
      // Inputs were validated field by field; what is left is the pool as a whole.
      throw new InputException(
          poolFileName,
          "spec",
          e.getMessage() + "; check replicas and sizes in " + snapshotFileName);
    }
  }

  /**
   * A budget less what the held workloads keep (they are not resized, but they still use it) and
   * the memory reserved beside the plan.
   */
  private static Objective available(Objective objective, Snapshot snapshot, long reservedBytes) {
    if (objective instanceof Objective.Budget budget) {
      // At least one byte, so an exhausted budget plans as infeasible rather than failing.
      return new Objective.Budget(
          Math.max(1, budget.bytes() - snapshot.heldMemoryBytes() - reservedBytes));
    }
    return objective;
  }

  /** The engine's view of every measured workload with the pool's settings applied. */
  public static List<Workload> workloads(PoolFile pool, Snapshot snapshot) {
    List<Workload> out = new ArrayList<>();
    for (Snapshot.Workload m : snapshot.workloads()) {
      WorkloadSettings settings = pool.settingsFor(m.name());
      GcModel calibrated = GcConstants.estimate(observation(m));
      GcModel gc =
          G1.equals(m.collector())
              ? CurveFit.fitOnOldHeadroom(calibrated, points(m), m.liveBytes())
              : CurveFit.fit(calibrated, points(m), m.liveBytes());
      out.add(
          new Workload(
              m.name(),
              m.replicas(),
              m.liveBytes(),
              m.layout().startupLiveBytes().orElse(m.liveBytes()),
              m.heapMaxBytes(),
              m.nonHeapBytes(),
              settings.weight(),
              gc,
              settings.toRules()));
    }
    return out;
  }

  /** Every point of a workload's curve: its history and today's measurement. */
  public static List<CurvePoint> points(Snapshot.Workload m) {
    List<CurvePoint> points = new ArrayList<>(m.layout().history());
    points.add(m.point());
    return points;
  }

  /** The engine's view of one workload's measurements. */
  public static GcObservation observation(Snapshot.Workload m) {
    return new GcObservation(
        m.collector(),
        m.heapMaxBytes(),
        m.liveBytes(),
        m.offsetBytes(),
        m.gcSecondsPerSecond(),
        m.youngGcSecondsPerSecond(),
        m.layout().steadyGcSecondsPerSecond(),
        m.layout().youngCapacityBytes(),
        m.layout().oldCapacityBytes(),
        m.promotionBytesPerSecond(),
        m.collectorBytesPerSecond());
  }
}
