package dev.heapherd.reconcile;

import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Snapshot;
import java.time.Instant;
import java.util.Collection;

/** Where the reconciler gets a pool's measurements from. */
public interface MetricsSource {

  /**
   * The newest measurement of {@code pool}'s workloads at or before {@code now}. Failures come back
   * as held workloads with the reason, never as exceptions; {@link Snapshot#capturedAt()} tells how
   * old the numbers are.
   *
   * @param workloads the workloads the pool selects: held when not found
   */
  Snapshot measure(PoolFile pool, String namespace, Collection<String> workloads, Instant now);
}
