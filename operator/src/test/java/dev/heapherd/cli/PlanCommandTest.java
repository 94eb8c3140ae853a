package dev.heapherd.cli;

import static dev.heapherd.cli.PlanInputs.POOL;
import static dev.heapherd.cli.PlanInputs.SNAPSHOT;
import static dev.heapherd.cli.PlanInputs.replaceOnce;
import static dev.heapherd.cli.PlanInputs.write;
import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import dev.heapherd.input.Snapshot;
import dev.heapherd.input.SnapshotReader;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class PlanCommandTest {

  // Maven runs the tests in the module folder, operator/, next to docs/.
  private static final Path EXAMPLE_POOL = Path.of("..", "docs", "examples", "pool.yaml");
  private static final Path EXAMPLE_SNAPSHOT = Path.of("..", "docs", "examples", "snapshot.yaml");

  private static final ObjectMapper JSON = new ObjectMapper();

  @TempDir Path dir;

  @Test
  void plansTheBundledExampleAsATable() throws Exception {
    String table = PlanRun.plan(EXAMPLE_POOL, EXAMPLE_SNAPSHOT).assertSucceeded();

    for (String name : exampleWorkloadNames()) {
      assertThat(table).contains(name);
    }
    assertThat(table)
        .contains("Plan for pool dispatch in namespace tidewater-dispatch")
        .contains("\nCaution: ")
        .doesNotContain("NOT FEASIBLE");
  }

  @Test
  void plansTheBundledExampleAsJson() throws Exception {
    JsonNode plan = json(PlanRun.plan(EXAMPLE_POOL, EXAMPLE_SNAPSHOT, "-o", "json"));

    assertThat(plan.path("feasible").asBoolean()).isTrue();
    assertThat(plan.path("budgetBytes").asLong()).isEqualTo(72L * 1024 * MIB);
    assertThat(plan.path("caution").asText()).isNotBlank();
    assertThat(names(plan)).containsExactlyElementsOf(exampleWorkloadNames());
    assertWellFormed(plan);
  }

  @Test
  void plansAJsonSnapshotLikeTheSameYaml() throws Exception {
    String json = JSON.writeValueAsString(new YAMLMapper().readTree(SNAPSHOT));
    Path pool = write(dir, "pool.yaml", POOL);

    String fromJson = PlanRun.plan(pool, write(dir, "snapshot.json", json)).assertSucceeded();

    assertThat(fromJson)
        .isEqualTo(PlanRun.plan(pool, write(dir, "snapshot.yaml", SNAPSHOT)).assertSucceeded());
  }

  @Test
  void holdsEveryHeapAtItsLowEndWhenTheBudgetIsTooSmall() throws Exception {
    Path pool =
        write(dir, "pool.yaml", replaceOnce(POOL, "memoryBudget: 12Gi", "memoryBudget: 4Gi"));
    Path snapshot = write(dir, "snapshot.yaml", SNAPSHOT);

    JsonNode plan = json(PlanRun.plan(pool, snapshot, "-o", "json"));

    assertThat(plan.path("feasible").asBoolean()).isFalse();
    assertThat(plan.path("minimumBudgetBytes").asLong())
        .isGreaterThan(plan.path("budgetBytes").asLong());
    for (JsonNode w : plan.path("workloads")) {
      assertThat(w.path("heapBytes").asLong())
          .as(w.path("name").asText())
          .isEqualTo(w.path("lowHeapBytes").asLong());
    }
    assertThat(PlanRun.plan(pool, snapshot).assertSucceeded()).contains("NOT FEASIBLE");
  }

  @Test
  void sizesThePoolFromPrices() throws Exception {
    Path snapshot = write(dir, "snapshot.yaml", SNAPSHOT);
    Path pool = write(dir, "pool.yaml", withPrices("0.005", "0.04"));

    JsonNode plan = json(PlanRun.plan(pool, snapshot, "-o", "json"));

    assertThat(plan.path("objective").asText()).isEqualTo("prices");
    assertThat(plan.path("feasible").asBoolean()).isTrue();
    // With prices the pool is as large as the plan uses.
    assertThat(plan.path("budgetBytes").asLong()).isEqualTo(plan.path("usedBytes").asLong());
    assertWellFormed(plan);
    assertThat(PlanRun.plan(pool, snapshot).assertSucceeded())
        .contains("pool size chosen by prices")
        .contains("\nCaution: ");
  }

  @Test
  void givesMoreMemoryWhenMemoryIsCheaper() throws Exception {
    Path snapshot = write(dir, "snapshot.yaml", SNAPSHOT);
    Path cheap = write(dir, "cheap.yaml", withPrices("0.0005", "0.04"));
    Path dear = write(dir, "dear.yaml", withPrices("0.05", "0.04"));

    long cheapBytes = json(PlanRun.plan(cheap, snapshot, "-o", "json")).path("usedBytes").asLong();
    long dearBytes = json(PlanRun.plan(dear, snapshot, "-o", "json")).path("usedBytes").asLong();

    assertThat(cheapBytes).isGreaterThan(dearBytes);
  }

  @Test
  void rejectsAnOverrideForAWorkloadTheSnapshotLacks() throws Exception {
    Path pool = write(dir, "pool.yaml", replaceOnce(POOL, "- name: relay", "- name: ghost"));
    Path snapshot = write(dir, "snapshot.yaml", SNAPSHOT);

    PlanRun run = PlanRun.plan(pool, snapshot);

    run.assertRejected(pool, "spec.overrides[1].name", "workload \"ghost\" is not in the snapshot");
    assertThat(run.err()).contains(snapshot.toString());
  }

  @Test
  void reportsThePoolBeforeTheSnapshotWhenBothAreBad() throws Exception {
    Path pool = write(dir, "pool.yaml", replaceOnce(POOL, "mode: DryRun", "mode: Auto"));
    Path snapshot =
        write(dir, "snapshot.yaml", replaceOnce(SNAPSHOT, "replicas: 4", "replicas: 0"));

    PlanRun.plan(pool, snapshot).assertRejected(pool, "spec.mode", "\"Auto\" is not one of");
  }

  @Test
  void rejectsAMissingOptionWithoutWritingToStdout() throws Exception {
    PlanRun run = PlanRun.run("plan", "--pool", write(dir, "pool.yaml", POOL).toString());

    assertThat(run.exitCode()).isEqualTo(2);
    assertThat(run.out()).isEmpty();
    assertThat(run.err()).contains("--snapshot");
  }

  @Test
  void rejectsAnUnknownOutputFormatWithoutWritingToStdout() throws Exception {
    Path pool = write(dir, "pool.yaml", POOL);
    Path snapshot = write(dir, "snapshot.yaml", SNAPSHOT);

    PlanRun run = PlanRun.plan(pool, snapshot, "-o", "yaml");

    assertThat(run.exitCode()).isEqualTo(2);
    assertThat(run.out()).isEmpty();
    assertThat(run.err()).contains("yaml");
  }

  private static List<String> exampleWorkloadNames() throws Exception {
    return SnapshotReader.read(EXAMPLE_SNAPSHOT).workloads().stream()
        .map(Snapshot.Workload::name)
        .toList();
  }

  private static String withPrices(String memoryPerGiBHour, String cpuPerCoreHour) {
    return replaceOnce(
        POOL,
        "memoryBudget: 12Gi",
        "prices:\n    memoryPerGiBHour: "
            + memoryPerGiBHour
            + "\n    cpuPerCoreHour: "
            + cpuPerCoreHour);
  }

  private static JsonNode json(PlanRun run) throws Exception {
    return JSON.readTree(run.assertSucceeded());
  }

  private static List<String> names(JsonNode plan) {
    List<String> names = new ArrayList<>();
    plan.path("workloads").forEach(w -> names.add(w.path("name").asText()));
    return names;
  }

  /**
   * The plan's contract: every field present with its type, limits in whole MiB within bounds, and
   * the pool within its budget.
   */
  private static void assertWellFormed(JsonNode plan) {
    assertThat(plan.path("budgetBytes").isIntegralNumber()).isTrue();
    assertThat(plan.path("minimumBudgetBytes").isIntegralNumber()).isTrue();
    assertThat(plan.path("feasible").isBoolean()).isTrue();
    assertThat(plan.path("workloads").isArray()).isTrue();
    assertThat(plan.path("workloads")).isNotEmpty();
    long total = 0;
    for (JsonNode w : plan.path("workloads")) {
      String name = w.path("name").asText();
      assertThat(w.path("name").isTextual()).as(name).isTrue();
      for (String field :
          List.of(
              "replicas",
              "liveBytes",
              "currentHeapBytes",
              "heapBytes",
              "limitBytes",
              "offsetBytes",
              "lowHeapBytes",
              "highHeapBytes")) {
        assertThat(w.path(field).isIntegralNumber()).as(name + "." + field).isTrue();
      }
      for (String field : List.of("gcConstant", "weight")) {
        assertThat(w.path(field).isNumber()).as(name + "." + field).isTrue();
      }
      JsonNode gc = w.path("predictedGcSecondsPerHour");
      assertThat(gc.path("current").isNumber()).as(name + " GC now").isTrue();
      assertThat(gc.path("proposed").isNumber()).as(name + " GC proposed").isTrue();
      assertThat(w.path("bound").asText())
          .as(name)
          .isIn("none", "floor", "promotion-room", "ceiling", "step");

      long heap = w.path("heapBytes").asLong();
      long limit = w.path("limitBytes").asLong();
      assertThat(heap % MIB).as(name + " heap in whole MiB").isZero();
      assertThat(limit % MIB).as(name + " limit in whole MiB").isZero();
      assertThat(limit).as(name + " limit above heap").isGreaterThan(heap);
      assertThat(heap)
          .as(name + " heap within its bounds")
          .isBetween(w.path("lowHeapBytes").asLong(), w.path("highHeapBytes").asLong())
          .isGreaterThan(w.path("liveBytes").asLong());
      total += w.path("replicas").asLong() * limit;
    }
    assertThat(total).isEqualTo(plan.path("usedBytes").asLong());
    assertThat(total).isLessThanOrEqualTo(plan.path("budgetBytes").asLong());
  }
}
