package dev.heapherd.plan;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.heapherd.input.PoolFile;
import dev.heapherd.input.PoolFileReader;
import dev.heapherd.input.Snapshot;
import dev.heapherd.input.SnapshotReader;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Locale;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The review page of the bundled example: self-contained, and its figures are the plan's. */
class PlanPageTest {

  private static final Path EXAMPLES = Path.of("..", "docs", "examples");

  @TempDir Path dir;

  @Test
  void thePageIsSelfContainedAndCarriesEveryFigureOfThePlan() throws Exception {
    PlanDocument doc = plan(EXAMPLES.resolve("snapshot.yaml"));

    String page = PlanPage.render(doc);

    // No script and nothing fetched: the page must open offline and in a locked-down viewer.
    assertThat(page).doesNotContain("<script").doesNotContain("src=").doesNotContain("href=");
    assertThat(page).contains(PlanPage.esc(doc.caution()));
    var f = doc.predictedGcSecondsPerHour();
    for (double seconds :
        new double[] {f.current(), f.proposed(), f.linearRule(), f.equalSplit()}) {
      assertThat(page)
          .contains(String.format(Locale.ROOT, "data-seconds-per-hour=\"%.2f\"", seconds));
    }
    for (PlanDocument.WorkloadEntry w : doc.workloads()) {
      assertThat(page)
          .contains("data-workload=\"" + w.name() + "\"")
          .contains("data-mark=\"proposal\" data-heap-bytes=\"" + w.heapBytes() + "\"")
          .contains("data-mark=\"today\" data-heap-bytes=\"" + w.currentHeapBytes() + "\"")
          .contains(
              "data-mark=\"linear rule\" data-heap-bytes=\""
                  + w.comparison().linearRuleHeapBytes()
                  + "\"");
    }
  }

  @Test
  void theCurveDrawnIsTheCurveThePlanPredictsWith() throws Exception {
    PlanDocument doc = plan(EXAMPLES.resolve("snapshot.yaml"));

    for (PlanDocument.WorkloadEntry w : doc.workloads()) {
      var forecast = w.predictedGcSecondsPerHour();
      // The engine's forecasts are for all replicas; the page draws one pod.
      assertThat(w.replicas() * CurvePlot.perHour(w, w.heapBytes()))
          .isCloseTo(forecast.proposed(), within(1e-9 * Math.max(1, forecast.proposed())));
      assertThat(w.replicas() * CurvePlot.perHour(w, w.currentHeapBytes()))
          .isCloseTo(forecast.current(), within(1e-9 * Math.max(1, forecast.current())));
    }
  }

  @Test
  void namesAndReasonsFromFilesAreShownAsTextNotMarkup() throws Exception {
    Path snapshot = dir.resolve("snapshot.yaml");
    Files.writeString(
        snapshot,
        Files.readString(EXAMPLES.resolve("snapshot.yaml"))
            + "held:\n  - name: fare-cache\n    reason: \"<img src=x onerror=alert(1)>\"\n");

    String page = PlanPage.render(plan(snapshot));

    assertThat(page).doesNotContain("<img").contains("&lt;img src=x onerror=alert(1)&gt;");
  }

  private static PlanDocument plan(Path snapshotPath) throws Exception {
    Path poolPath = EXAMPLES.resolve("pool.yaml");
    PoolFile pool = PoolFileReader.read(poolPath);
    Snapshot snapshot = SnapshotReader.read(snapshotPath);
    return PlanDocument.of(
        pool, snapshot, Planner.plan(pool, poolPath.toString(), snapshot, snapshotPath.toString()));
  }
}
