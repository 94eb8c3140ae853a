package dev.heapherd.input;

import static dev.heapherd.cli.PlanInputs.POOL;
import static dev.heapherd.cli.PlanInputs.SNAPSHOT;
import static dev.heapherd.cli.PlanInputs.replaceOnce;
import static dev.heapherd.cli.PlanInputs.write;
import static org.assertj.core.api.Assertions.assertThat;

import dev.heapherd.cli.PlanRun;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** What a YAML tree would silently get wrong, and files that must not be read whole. */
class DocumentsTest {

  @TempDir Path dir;

  /** Workloads in the large snapshot: the size the issue tracker asked to work. */
  private static final int MANY_WORKLOADS = 100_000;

  @Test
  void aPoolFileWithASecondDocumentIsRefused() throws Exception {
    Path pool = write(dir, "pool.yaml", POOL + "---\n" + POOL);
    PlanRun.plan(pool, write(dir, "snapshot.yaml", SNAPSHOT))
        .assertRejected(pool, "line 22", "a second YAML document");
  }

  @Test
  void anAliasIsRefusedRatherThanReadAsItsName() throws Exception {
    Path snapshot =
        write(
            dir,
            "snapshot.yaml",
            replaceOnce(
                replaceOnce(SNAPSHOT, "heapMaxBytes: 768Mi", "heapMaxBytes: &relayHeap 768Mi"),
                "nonHeapBytes: 150Mi",
                "nonHeapBytes: *relayHeap"));
    PlanRun.plan(write(dir, "pool.yaml", POOL), snapshot)
        .assertRejected(snapshot, "line 30", "uses a YAML anchor or alias");
  }

  @Test
  void aDeviceIsRefusedBeforeItIsRead() throws Exception {
    Path zero = Path.of("/dev/zero");
    PlanRun.plan(write(dir, "pool.yaml", POOL), zero)
        .assertRejected(zero, "", "cannot read: not a regular file");
  }

  @Test
  void aSnapshotOfAHundredThousandWorkloadsIsRead() throws Exception {
    StringBuilder text =
        new StringBuilder("capturedAt: 2026-11-30T09:00:00Z\nwindowSeconds: 3600\n");
    text.append("workloads:\n");
    for (int i = 0; i < MANY_WORKLOADS; i++) {
      text.append("  - name: svc-")
          .append(i)
          .append(
              "\n    kind: Deployment\n    replicas: 1\n    collector: G1\n"
                  + "    heapMaxBytes: 1Gi\n    liveBytes: 400Mi\n"
                  + "    gcSecondsPerSecond: 0.01\n    youngGcSecondsPerSecond: 0.004\n"
                  + "    nonHeapBytes: 200Mi\n");
    }
    Path snapshot = Files.writeString(dir.resolve("large.yaml"), text);
    assertThat(Files.size(snapshot)).isGreaterThan(3L << 20);

    assertThat(SnapshotReader.read(snapshot).workloads()).hasSize(MANY_WORKLOADS);
  }

  @Test
  void aValueOfFiftyMegabytesIsRefusedQuickly() throws Exception {
    Path pool =
        write(dir, "pool.yaml", POOL.replace("name: checkout", "name: " + "a".repeat(50_000_000)));
    PlanRun.plan(pool, write(dir, "snapshot.yaml", SNAPSHOT))
        .assertRejected(pool, "line 4", "is longer than 1048576 characters");
  }
}
