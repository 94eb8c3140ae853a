package dev.heapherd.reconcile;

import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Snapshot;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Collection;
import java.util.List;
import java.util.OptionalDouble;

/** Measurements set by the test instead of read from Prometheus. */
final class FakeMetrics implements MetricsSource {

  private volatile List<Snapshot.Workload> workloads = List.of();
  private volatile long ageSeconds;
  private volatile RuntimeException failure;

  /** Measures {@code workloads} from now on. */
  void set(List<Snapshot.Workload> workloads) {
    this.workloads = List.copyOf(workloads);
  }

  /** Makes every measurement {@code seconds} old, as when Prometheus stopped answering. */
  void age(long seconds) {
    this.ageSeconds = seconds;
  }

  /** Makes every measurement throw {@code failure}, as a defect in measuring would. */
  void fail(RuntimeException failure) {
    this.failure = failure;
  }

  @Override
  public Snapshot measure(PoolFile pool, String namespace, Collection<String> names, Instant now) {
    if (failure != null) {
      throw failure;
    }
    List<Snapshot.Workload> found = new ArrayList<>();
    List<Snapshot.Held> held = new ArrayList<>();
    for (String name : names) {
      workloads.stream()
          .filter(w -> w.name().equals(name))
          .findFirst()
          .ifPresentOrElse(
              found::add, () -> held.add(new Snapshot.Held(name, "no pod of it was scraped")));
    }
    return new Snapshot(now.minusSeconds(ageSeconds), 3600, found, held);
  }

  /**
   * A G1 workload with a one-hour history: {@code gcPercent} of its time in GC, a tenth of it in
   * young collections.
   */
  static Snapshot.Workload jvm(
      String name, int replicas, long heapMib, long liveMib, double gcPercent) {
    double gc = gcPercent / 100.0;
    return new Snapshot.Workload(
        name,
        "Deployment",
        replicas,
        "G1",
        heapMib << 20,
        liveMib << 20,
        gc,
        gc / 10,
        0,
        OptionalDouble.empty(),
        OptionalDouble.empty(),
        200L << 20,
        new Snapshot.Evidence(120, "High", List.of()),
        Snapshot.Layout.UNKNOWN);
  }
}
