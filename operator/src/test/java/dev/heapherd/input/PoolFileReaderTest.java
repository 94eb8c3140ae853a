package dev.heapherd.input;

import static dev.heapherd.cli.PlanInputs.POOL;
import static dev.heapherd.cli.PlanInputs.SNAPSHOT;
import static dev.heapherd.cli.PlanInputs.replaceOnce;
import static dev.heapherd.cli.PlanInputs.write;
import static dev.heapherd.engine.Units.GIB;
import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;
import static org.junit.jupiter.params.provider.Arguments.arguments;

import dev.heapherd.cli.PlanRun;
import dev.heapherd.engine.Objective;
import java.nio.file.Path;
import java.util.Map;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;
import org.junit.jupiter.params.provider.ValueSource;

class PoolFileReaderTest {

  @TempDir Path dir;

  @Test
  void readsThePoolAndLaysOverridesOverDefaultsOverBuiltIns() throws Exception {
    PoolFile pool = PoolFileReader.read(write(dir, "pool.yaml", POOL));

    assertThat(pool.name()).isEqualTo("checkout");
    assertThat(pool.namespace()).isEqualTo("shop");
    assertThat(pool.mode()).isEqualTo(PoolFile.Mode.DryRun);
    assertThat(pool.objective()).isEqualTo(new Objective.Budget(12 * GIB));
    assertThat(pool.matchLabels()).isEqualTo(Map.of("heapherd.dev/pool", "checkout"));
    assertThat(pool.overrides())
        .extracting(PoolFile.Override::name)
        .containsExactly("ledger", "relay");
    // ledger: weight from its override, sizes from the defaults, percents built in.
    assertThat(pool.settingsFor("ledger"))
        .isEqualTo(new WorkloadSettings(3L, 256 * MIB, 4 * GIB, 25L, 50L, 64 * MIB));
    assertThat(pool.settingsFor("relay"))
        .isEqualTo(new WorkloadSettings(1L, 400 * MIB, 4 * GIB, 25L, 50L, 64 * MIB));
    assertThat(pool.settingsFor("quoter"))
        .isEqualTo(new WorkloadSettings(1L, 256 * MIB, 4 * GIB, 25L, 50L, 64 * MIB));
  }

  @Test
  void defaultsTheOptionalParts() throws Exception {
    String minimal =
        """
        apiVersion: heapherd.dev/v1alpha1
        kind: HeapPool
        metadata:
          name: checkout
        spec:
          memoryBudget: "8589934592"
          selector:
            matchLabels:
              app: checkout
        """;

    PoolFile pool = PoolFileReader.read(write(dir, "pool.yaml", minimal));

    assertThat(pool.namespace()).isEmpty();
    assertThat(pool.mode()).isEqualTo(PoolFile.Mode.DryRun);
    assertThat(pool.objective()).isEqualTo(new Objective.Budget(8 * GIB));
    assertThat(pool.overrides()).isEmpty();
    assertThat(pool.settingsFor("any")).isEqualTo(WorkloadSettings.BUILT_IN);
  }

  @Test
  void readsPrices() throws Exception {
    String prices =
        replaceOnce(
            POOL,
            "memoryBudget: 12Gi",
            "prices:\n    memoryPerGiBHour: 0.005\n    cpuPerCoreHour: \"0.04\"");

    PoolFile pool = PoolFileReader.read(write(dir, "pool.yaml", prices));

    assertThat(pool.objective()).isEqualTo(new Objective.Prices(0.005, 0.04));
  }

  @Test
  void readsRolloutSettingsAndTheApproval() throws Exception {
    String rollout =
        replaceOnce(
            POOL,
            "  defaults:",
            """
              approvedProposal: 3f9c0a7d12e4b5c6
              rollout:
                containerName: app
                jvmOptionsVariable: JDK_JAVA_OPTIONS
                setMemoryRequest: false
                setInitialHeap: true
                approval: Automatic
                maxRollingWorkloads: 2
                cooldownSeconds: 600
                changeThresholdPercent: 10
                metricsMaxAgeSeconds: 300
                freezeWindows:
                  - start: "2026-12-24T00:00:00Z"
                    end: "2026-12-27T00:00:00+01:00"
              defaults:"""
                .indent(2)
                .stripTrailing());

    PoolFile pool = PoolFileReader.read(write(dir, "pool.yaml", rollout));

    assertThat(pool.approvedProposal()).isEqualTo("3f9c0a7d12e4b5c6");
    PoolFile.Rollout r = pool.rollout();
    assertThat(r.containerName()).isEqualTo("app");
    assertThat(r.jvmOptionsVariable()).isEqualTo("JDK_JAVA_OPTIONS");
    assertThat(r.setMemoryRequest()).isFalse();
    assertThat(r.setInitialHeap()).isTrue();
    assertThat(r.automaticApproval()).isTrue();
    assertThat(r.maxRollingWorkloads()).isEqualTo(2);
    assertThat(r.cooldownSeconds()).isEqualTo(600);
    assertThat(r.changeThresholdPercent()).isEqualTo(10);
    assertThat(r.metricsMaxAgeSeconds()).isEqualTo(300);
    assertThat(r.frozenAt(java.time.Instant.parse("2026-12-25T12:00:00Z"))).isTrue();
    // The end is 2026-12-26T23:00Z once its zone is applied.
    assertThat(r.frozenAt(java.time.Instant.parse("2026-12-26T23:30:00Z"))).isFalse();
    assertThat(r.frozenAt(java.time.Instant.parse("2026-12-23T23:59:59Z"))).isFalse();
  }

  @Test
  void defaultsTheRolloutSettings() throws Exception {
    PoolFile pool = PoolFileReader.read(write(dir, "pool.yaml", POOL));

    assertThat(pool.rollout()).isEqualTo(PoolFileReader.DEFAULT_ROLLOUT);
    assertThat(pool.approvedProposal()).isEmpty();
    assertThat(pool.rollout().jvmOptionsVariable()).isEqualTo("JAVA_TOOL_OPTIONS");
    assertThat(pool.rollout().automaticApproval()).isFalse();
  }

  @Test
  void reportsAMissingFile() throws Exception {
    Path pool = dir.resolve("absent.yaml");

    PlanRun.plan(pool, write(dir, "snapshot.yaml", SNAPSHOT))
        .assertRejected(pool, "", "no such file");
  }

  @ParameterizedTest
  @ValueSource(strings = {"", "  \n", "# the pool comes later\n"})
  void reportsAnEmptyFile(String text) throws Exception {
    Path pool = write(dir, "pool.yaml", text);

    PlanRun.plan(pool, write(dir, "snapshot.yaml", SNAPSHOT)).assertRejected(pool, "", "is empty");
  }

  @Test
  void reportsAFolderInsteadOfAFile() throws Exception {
    PlanRun.plan(dir, write(dir, "snapshot.yaml", SNAPSHOT)).assertRejected(dir, "", "cannot read");
  }

  @ParameterizedTest(name = "{0}")
  @MethodSource("badPools")
  void rejectsBadPoolsInOneLine(String what, String from, String to, String where, String problem)
      throws Exception {
    Path pool = write(dir, "pool.yaml", replaceOnce(POOL, from, to));

    PlanRun.plan(pool, write(dir, "snapshot.yaml", SNAPSHOT)).assertRejected(pool, where, problem);
  }

  @ParameterizedTest(name = "{0}")
  @MethodSource("badPools")
  void printsNothingForBadPoolsAsJsonEither(
      String what, String from, String to, String where, String problem) throws Exception {
    Path pool = write(dir, "pool.yaml", replaceOnce(POOL, from, to));

    PlanRun.plan(pool, write(dir, "snapshot.yaml", SNAPSHOT), "-o", "json")
        .assertRejected(pool, where, problem);
  }

  static Stream<Arguments> badPools() {
    return Stream.of(
        // A query that would read every namespace.
        arguments(
            "a query without the pool's selector",
            "  defaults:",
            "  metrics:\n    queries:\n      - signal: liveBytes\n"
                + "        promql: 'max by (namespace, pod) (jvm_memory_used_bytes)'\n  defaults:",
            "spec.metrics.queries[0].promql",
            "must contain ${selector} in each series selector"),
        // One selector scoped, the one joined to it not: the join reads every namespace.
        arguments(
            "a query whose second selector lacks the pool's selector",
            "  defaults:",
            "  metrics:\n    queries:\n      - signal: liveBytes\n"
                + "        promql: 'max by (namespace, pod) (jvm_memory_used_bytes{${selector}})"
                + " * on (pod) group_left kube_pod_info'\n  defaults:",
            "spec.metrics.queries[0].promql",
            "\"kube_pod_info\" has none"),
        // Rollout settings.
        arguments(
            "an environment variable name with a space",
            "  defaults:",
            "  rollout:\n    jvmOptionsVariable: JAVA OPTS\n  defaults:",
            "spec.rollout.jvmOptionsVariable",
            "\"JAVA OPTS\" is not an environment variable name"),
        arguments(
            "an unknown approval",
            "  defaults:",
            "  rollout:\n    approval: Sometimes\n  defaults:",
            "spec.rollout.approval",
            "\"Sometimes\" is not one of"),
        arguments(
            "a freeze window ending before it starts",
            "  defaults:",
            "  rollout:\n    freezeWindows:\n      - start: \"2026-12-24T00:00:00Z\"\n"
                + "        end: \"2026-12-23T00:00:00Z\"\n  defaults:",
            "spec.rollout.freezeWindows[0].end",
            "must be after start"),
        arguments(
            "a freeze window without a zone",
            "  defaults:",
            "  rollout:\n    freezeWindows:\n      - start: \"2026-12-24T00:00:00\"\n"
                + "        end: \"2026-12-25T00:00:00Z\"\n  defaults:",
            "spec.rollout.freezeWindows[0].start",
            "is not an RFC 3339 time"),
        arguments(
            "an approval that is not a hash",
            "  defaults:",
            "  approvedProposal: latest\n  defaults:",
            "spec.approvedProposal",
            "\"latest\" is not a proposal hash"),
        arguments(
            "zero rolling workloads",
            "  defaults:",
            "  rollout:\n    maxRollingWorkloads: 0\n  defaults:",
            "spec.rollout.maxRollingWorkloads",
            "0"),
        // Units.
        arguments(
            "GB is not a unit",
            "memoryBudget: 12Gi",
            "memoryBudget: 12GB",
            "spec.memoryBudget",
            "unknown unit \"GB\""),
        arguments(
            "lower-case gb is not a unit",
            "memoryBudget: 12Gi",
            "memoryBudget: 1.5gb",
            "spec.memoryBudget",
            "unknown unit \"gb\""),
        arguments(
            "m is milli, not mebi",
            "heapFloor: 256Mi",
            "heapFloor: 512m",
            "spec.defaults.heapFloor",
            "thousandths of a byte"),
        arguments(
            "m is milli in an override too",
            "heapFloor: 400Mi",
            "heapFloor: 400m",
            "spec.overrides[1].heapFloor",
            "thousandths of a byte"),
        // Sizes that are not positive.
        arguments(
            "zero budget",
            "memoryBudget: 12Gi",
            "memoryBudget: 0",
            "spec.memoryBudget",
            "must be positive"),
        arguments(
            "negative budget",
            "memoryBudget: 12Gi",
            "memoryBudget: -12Gi",
            "spec.memoryBudget",
            "must be positive"),
        arguments(
            "zero heapFloor",
            "heapFloor: 256Mi",
            "heapFloor: 0",
            "spec.defaults.heapFloor",
            "must be positive"),
        arguments(
            "negative heapFloor in an override",
            "heapFloor: 400Mi",
            "heapFloor: -400Mi",
            "spec.overrides[1].heapFloor",
            "must be positive"),
        arguments(
            "negative limitMargin",
            "limitMargin: 64Mi",
            "limitMargin: -64Mi",
            "spec.defaults.limitMargin",
            "must not be negative"),
        // Numbers beyond what the arithmetic can hold must be bad input, not a wrapped-around plan.
        arguments(
            "budget beyond 64 bits",
            "memoryBudget: 12Gi",
            "memoryBudget: 1.0e+30",
            "spec.memoryBudget",
            ""),
        arguments(
            "margin whose sum with non-heap overflows",
            "limitMargin: 64Mi",
            "limitMargin: 9223372036854775807",
            "spec.defaults.limitMargin",
            ""),
        // Floors and ceilings.
        arguments(
            "heapFloor above heapCeiling in the defaults",
            "heapFloor: 256Mi",
            "heapFloor: 5Gi",
            "spec.defaults",
            "heapFloor 5Gi is above heapCeiling 4Gi"),
        arguments(
            "override heapFloor above the default heapCeiling",
            "heapFloor: 400Mi",
            "heapFloor: 5Gi",
            "spec.overrides[1]",
            "heapFloor 5Gi is above heapCeiling 4Gi"),
        // Weights and percents.
        arguments(
            "zero weight",
            "weight: 3",
            "weight: 0",
            "spec.overrides[0].weight",
            "must be between 1 and 1000, got 0"),
        arguments(
            "weight above the maximum",
            "weight: 3",
            "weight: 1001",
            "spec.overrides[0].weight",
            "must be between 1 and 1000, got 1001"),
        arguments(
            "fractional weight",
            "weight: 3",
            "weight: 2.5",
            "spec.overrides[0].weight",
            "must be a whole number, got 2.5"),
        arguments(
            "weight as text",
            "weight: 3",
            "weight: high",
            "spec.overrides[0].weight",
            "must be a whole number, got \"high\""),
        arguments(
            "zero step",
            "limitMargin: 64Mi",
            "limitMargin: 64Mi\n    maxStepPercent: 0",
            "spec.defaults.maxStepPercent",
            "must be between 1 and 1000"),
        // Names.
        arguments(
            "duplicate override name",
            "- name: relay",
            "- name: ledger",
            "spec.overrides[1].name",
            "duplicate workload name \"ledger\""),
        arguments(
            "override without a name",
            "- name: relay\n      heapFloor",
            "- heapFloor",
            "spec.overrides[1].name",
            "is required"),
        // Objective.
        arguments(
            "both memoryBudget and prices",
            "memoryBudget: 12Gi",
            "memoryBudget: 12Gi\n  prices:\n    memoryPerGiBHour: 0.005\n    cpuPerCoreHour: 0.04",
            "spec",
            "set exactly one of memoryBudget or prices"),
        arguments(
            "neither memoryBudget nor prices",
            "  memoryBudget: 12Gi\n",
            "",
            "spec",
            "set exactly one of memoryBudget or prices"),
        arguments(
            "prices without the CPU price",
            "memoryBudget: 12Gi",
            "prices:\n    memoryPerGiBHour: 0.005",
            "spec.prices.cpuPerCoreHour",
            "is required"),
        arguments(
            "a price as text",
            "memoryBudget: 12Gi",
            "prices:\n    memoryPerGiBHour: cheap\n    cpuPerCoreHour: 0.04",
            "spec.prices.memoryPerGiBHour",
            "must be a decimal number, got \"cheap\""),
        arguments(
            "a zero price",
            "memoryBudget: 12Gi",
            "prices:\n    memoryPerGiBHour: 0.005\n    cpuPerCoreHour: 0",
            "spec.prices.cpuPerCoreHour",
            "must be positive"),
        arguments(
            "misspelt price",
            "memoryBudget: 12Gi",
            "prices:\n    memoryPerGibHour: 0.005\n    cpuPerCoreHour: 0.04",
            "spec.prices.memoryPerGibHour",
            "unknown field"),
        // Header and mode.
        arguments(
            "wrong apiVersion",
            "apiVersion: heapherd.dev/v1alpha1",
            "apiVersion: heapherd.dev/v1",
            "apiVersion",
            "must be heapherd.dev/v1alpha1, got heapherd.dev/v1"),
        arguments(
            "wrong kind",
            "kind: HeapPool",
            "kind: HeapPools",
            "kind",
            "\"HeapPools\" is not one of HeapPool"),
        arguments(
            "unknown mode",
            "mode: DryRun",
            "mode: Auto",
            "spec.mode",
            "\"Auto\" is not one of Apply, DryRun"),
        arguments(
            "mode in the wrong case",
            "mode: DryRun",
            "mode: dryrun",
            "spec.mode",
            "\"dryrun\" is not one of Apply, DryRun"),
        // Missing and unknown fields.
        arguments(
            "missing apiVersion",
            "apiVersion: heapherd.dev/v1alpha1\n",
            "",
            "apiVersion",
            "is required"),
        arguments(
            "missing metadata.name", "  name: checkout\n", "", "metadata.name", "is required"),
        arguments(
            "missing selector",
            "  selector:\n    matchLabels:\n      heapherd.dev/pool: checkout\n",
            "",
            "spec.selector",
            "is required"),
        arguments(
            "empty matchLabels",
            "    matchLabels:\n      heapherd.dev/pool: checkout\n",
            "    matchLabels: {}\n",
            "spec.selector.matchLabels",
            "must name at least one label"),
        arguments(
            "misspelt default",
            "heapFloor: 256Mi",
            "heapFlor: 256Mi",
            "spec.defaults.heapFlor",
            "unknown field"),
        arguments(
            "misspelt override field",
            "weight: 3",
            "wieght: 3",
            "spec.overrides[0].wieght",
            "unknown field"),
        arguments(
            "misspelt spec field", "mode: DryRun", "mdoe: DryRun", "spec.mdoe", "unknown field"),
        arguments(
            "misspelt metadata field",
            "namespace: shop",
            "namepsace: shop",
            "metadata.namepsace",
            "unknown field"),
        // Malformed YAML: the line and column of the problem.
        arguments(
            "bad indentation",
            "  namespace: shop",
            "    namespace: shop",
            "line 5, column 14",
            "malformed YAML"),
        arguments(
            "unclosed bracket",
            "heapherd.dev/pool: checkout",
            "heapherd.dev/pool: [checkout",
            "line 12, column 11",
            "malformed YAML"),
        arguments(
            "tab indentation",
            "    heapCeiling: 4Gi",
            "\theapCeiling: 4Gi",
            "line 14, column 1",
            "TAB"),
        arguments(
            "duplicate key",
            "  mode: DryRun\n",
            "  mode: DryRun\n  mode: Apply\n",
            "line 8, column 7",
            "Duplicate field 'mode'"));
  }
}
