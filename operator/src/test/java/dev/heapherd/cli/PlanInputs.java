package dev.heapherd.cli;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;

/** A valid pool and snapshot that tests break one field at a time. */
public final class PlanInputs {

  /** A feasible pool with a budget; every line a test replaces occurs once. */
  public static final String POOL =
      """
      apiVersion: heapherd.dev/v1alpha1
      kind: HeapPool
      metadata:
        name: checkout
        namespace: shop
      spec:
        mode: DryRun
        memoryBudget: 12Gi
        selector:
          matchLabels:
            heapherd.dev/pool: checkout
        defaults:
          heapFloor: 256Mi
          heapCeiling: 4Gi
          limitMargin: 64Mi
        overrides:
          - name: ledger
            weight: 3
          - name: relay
            heapFloor: 400Mi
      """;

  /** Three workloads; the last one's lines are unique, so a test can break workloads[2] alone. */
  public static final String SNAPSHOT =
      """
      capturedAt: 2026-11-30T09:00:00Z
      windowSeconds: 3600
      workloads:
        - name: ledger
          kind: StatefulSet
          replicas: 2
          collector: G1
          heapMaxBytes: 2Gi
          liveBytes: 900Mi
          gcSecondsPerSecond: 0.02
          youngGcSecondsPerSecond: 0.004
          nonHeapBytes: 300Mi
        - name: quoter
          kind: Deployment
          replicas: 3
          collector: Parallel
          heapMaxBytes: 1Gi
          liveBytes: 500Mi
          gcSecondsPerSecond: 0.03
          youngGcSecondsPerSecond: 0.006
          nonHeapBytes: 200Mi
        - name: relay
          kind: Deployment
          replicas: 4
          collector: ZGC
          heapMaxBytes: 768Mi
          liveBytes: 300Mi
          gcSecondsPerSecond: 0.01
          youngGcSecondsPerSecond: 0.002
          nonHeapBytes: 150Mi
      """;

  private PlanInputs() {}

  /**
   * {@code text} with {@code from} replaced; {@code from} must occur exactly once, so a typo in a
   * test cannot leave the input valid by accident.
   */
  public static String replaceOnce(String text, String from, String to) {
    int at = text.indexOf(from);
    assertThat(at).as("position of %s", from).isNotNegative();
    assertThat(text.indexOf(from, at + 1)).as("second position of %s", from).isNegative();
    return text.substring(0, at) + to + text.substring(at + from.length());
  }

  /** Writes {@code text} to {@code dir/name}. */
  public static Path write(Path dir, String name, String text) throws IOException {
    return Files.writeString(dir.resolve(name), text);
  }
}
