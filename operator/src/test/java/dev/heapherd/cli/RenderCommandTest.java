package dev.heapherd.cli;

import static dev.heapherd.cli.PlanInputs.replaceOnce;
import static dev.heapherd.engine.Units.MIB;
import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import dev.heapherd.engine.Units;
import dev.heapherd.input.Quantity;
import dev.heapherd.plan.PlanDocument;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code render} on the bundled Tidewater Freight example (docs/examples) and on variants of it:
 * each test copies the example's manifests into a temporary folder and changes what it needs.
 */
class RenderCommandTest {

  // Maven runs the tests in the module folder, operator/, next to docs/.
  private static final Path EXAMPLES = Path.of("..", "docs", "examples");
  private static final Path POOL = EXAMPLES.resolve("pool.yaml");
  private static final Path SNAPSHOT = EXAMPLES.resolve("snapshot.yaml");

  /** The example pool's budget, docs/examples/pool.yaml. */
  private static final long BUDGET_BYTES = 72 * Units.GIB;

  /** warehouse-sync before and after: the plan raises its heap by the 50% step limit. */
  private static final String SYNC_OPTIONS_BEFORE = "-XX:+UseG1GC -Xmx1g";

  private static final String SYNC_OPTIONS_AFTER = "-XX:+UseG1GC -Xmx1536m";
  private static final String SYNC_LIMIT_BEFORE = "1344Mi";
  private static final String SYNC_LIMIT_AFTER = "1840Mi";

  private static final YAMLMapper YAML = new YAMLMapper();

  @TempDir Path dir;

  @Test
  void writesTheProposedSizesInPlaceAndExitsThree() throws IOException {
    Path manifests = example();

    PlanRun run = render(POOL, manifests);

    assertThat(run.exitCode()).as("stderr: %s", run.err()).isEqualTo(Main.EXIT_CHANGES);
    assertThat(run.err()).isEmpty();
    assertThat(run.out())
        .contains("Pool dispatch in namespace tidewater-dispatch: 7 of 8 workloads changed")
        .contains("WORKLOAD")
        .contains("1Gi -> 1.50Gi")
        .contains(manifests.resolve("warehouse-sync.yaml").toString())
        .contains(
            "Unchanged: driver-app-api: a 0.5% limit change (heap 0.4%) is below the 5% threshold")
        .contains("Caution: " + PlanDocument.CAUTION);
    JsonNode sync = container(manifests.resolve("warehouse-sync.yaml"), "warehouse-sync", "app");
    assertThat(options(sync)).isEqualTo(SYNC_OPTIONS_AFTER);
    assertThat(sync.at("/resources/limits/memory").asText()).isEqualTo(SYNC_LIMIT_AFTER);
    assertThat(sync.at("/resources/requests/memory").asText()).isEqualTo(SYNC_LIMIT_AFTER);
  }

  @Test
  void aSecondRunOnItsOwnOutputChangesNothing() throws IOException {
    Path manifests = example();
    Path out = dir.resolve("rendered");
    assertThat(render(POOL, manifests, "--output", out.toString()).exitCode())
        .isEqualTo(Main.EXIT_CHANGES);
    Map<String, String> first = contents(out);

    PlanRun again = render(POOL, out);

    assertThat(again.exitCode()).as("stdout: %s", again.out()).isZero();
    assertThat(again.out())
        .contains("no manifest changes for its 8 workloads")
        .contains("Unchanged: warehouse-sync: already has the proposed heap")
        .contains("Caution: ");
    assertThat(contents(out)).isEqualTo(first);
  }

  @Test
  void checkWritesNothingAndStillSaysWhatWouldChange() throws IOException {
    Path manifests = example();
    Map<String, String> before = contents(manifests);
    Path out = dir.resolve("rendered");

    PlanRun inPlace = render(POOL, manifests, "--check");
    PlanRun copied = render(POOL, manifests, "--check", "--output", out.toString());

    assertThat(inPlace.exitCode()).isEqualTo(Main.EXIT_CHANGES);
    assertThat(inPlace.out()).contains("7 of 8 workloads would change in 7 files (--check");
    assertThat(copied.exitCode()).isEqualTo(Main.EXIT_CHANGES);
    assertThat(contents(manifests)).isEqualTo(before);
    assertThat(out).doesNotExist();
  }

  @Test
  void leavesOtherDocumentsAndFilesByteForByte() throws IOException {
    Path manifests = example();
    Files.writeString(manifests.resolve("NOTES.txt"), "Reviewed by the dispatch team.\n");
    Files.createDirectories(manifests.resolve(".git"));
    Files.writeString(manifests.resolve(".git/config"), "[core]\n");
    Map<String, String> before = contents(manifests);
    Path out = dir.resolve("rendered");

    assertThat(render(POOL, manifests, "--output", out.toString()).exitCode())
        .isEqualTo(Main.EXIT_CHANGES);

    Map<String, String> after = contents(out);
    assertThat(after).doesNotContainKey(".git/config").containsKey("NOTES.txt");
    for (String unchanged : List.of("kustomization.yaml", "driver-app-api.yaml", "NOTES.txt")) {
      assertThat(after.get(unchanged)).as(unchanged).isEqualTo(before.get(unchanged));
    }
    // The ConfigMap and the Service around the changed Deployment stay as written, comments and
    // all; in the Deployment only the three values differ.
    String[] was = before.get("route-planner.yaml").split("\n---\n");
    String[] now = after.get("route-planner.yaml").split("\n---\n");
    assertThat(now).hasSize(3);
    assertThat(now[0]).isEqualTo(was[0]).contains("# Minutes a route may run past");
    assertThat(now[2]).isEqualTo(was[2]);
    assertThat(changedLines(was[1], now[1]))
        .containsExactly(
            "              value: \"-XX:+UseG1GC -Xmx5319m -XX:+ExitOnOutOfMemoryError\"",
            "              memory: 5803Mi",
            "              memory: 5803Mi");
  }

  @Test
  void patchesEveryWorkloadOfAMultiDocumentFile() throws IOException {
    Path manifests = example();
    String quoter = Files.readString(manifests.resolve("rate-quoter.yaml"));
    String sync = Files.readString(manifests.resolve("warehouse-sync.yaml"));
    Files.delete(manifests.resolve("rate-quoter.yaml"));
    Files.delete(manifests.resolve("warehouse-sync.yaml"));
    Path both =
        Files.writeString(manifests.resolve("quotes-and-sync.yaml"), quoter + "---\n" + sync);

    PlanRun run = render(POOL, manifests);

    assertThat(run.exitCode()).isEqualTo(Main.EXIT_CHANGES);
    assertThat(run.out()).contains("7 of 8 workloads changed in 6 files");
    String text = Files.readString(both);
    assertThat(text.split("\n---\n")).hasSize(2);
    assertThat(options(container(both, "rate-quoter", "app"))).contains("-Xmx1536m");
    assertThat(options(container(both, "warehouse-sync", "app"))).isEqualTo(SYNC_OPTIONS_AFTER);
    assertThat(text)
        .isEqualTo(
            quoter
                    .replace("-Xmx1g -XX:+Exit", "-Xmx1536m -XX:+Exit")
                    .replace("memory: 1344Mi", "memory: 1850Mi")
                + "---\n"
                + sync.replace(SYNC_OPTIONS_BEFORE, SYNC_OPTIONS_AFTER)
                    .replace(SYNC_LIMIT_BEFORE, SYNC_LIMIT_AFTER));
  }

  @Test
  void editsValuesInTheirOwnQuotingAndKeepsMarkersDirectivesAndComments() throws IOException {
    Path manifests = example();
    Files.delete(manifests.resolve("rate-quoter.yaml"));
    Files.delete(manifests.resolve("warehouse-sync.yaml"));
    // A generator's output: a directive, comments on the markers, flow style, an end marker, a
    // folded block value; and a character beyond 16 bits before the first value to change.
    String before =
        """
        %YAML 1.1
        --- # Source: tidewater/templates/warehouse-sync.yaml
        # \uD83D\uDE9A stock levels from the partner warehouses
        apiVersion: apps/v1
        kind: Deployment
        metadata: {name: warehouse-sync, labels: {heapherd.dev/pool: dispatch}}
        spec:
          replicas: 2
          template:
            spec:
              containers:
              - name: app
                env:
                - {name: JAVA_TOOL_OPTIONS, value: '-XX:+UseG1GC -Xmx1g -Dnote=''it is'''}
                resources: {limits: {memory: 1344Mi}, requests: {memory: "1344Mi"}}
        ...
        ---\s
        # Source: tidewater/templates/rate-quoter.yaml
        apiVersion: apps/v1
        kind: Deployment
        metadata:
          name: rate-quoter   # prices while the customer waits
          labels:
            heapherd.dev/pool: dispatch
        spec:
          replicas: 4
          template:
            spec:
              containers:
              - name: app
                env:
                - name: JAVA_TOOL_OPTIONS
                  value: >-
                    -XX:+UseG1GC
                    -Xmx1g
                resources:
                  limits:
                    memory: 1344Mi
        """;
    Path file = Files.writeString(manifests.resolve("generated.yaml"), before);

    PlanRun run = render(POOL, manifests);

    assertThat(run.exitCode()).isEqualTo(Main.EXIT_CHANGES);
    assertThat(run.out())
        .contains("Written anew, comments and layout not kept: Deployment rate-quoter");
    String firstDocument = before.substring(0, before.indexOf("...\n"));
    assertThat(Files.readString(file))
        .isEqualTo(
            firstDocument
                    .replace("-Xmx1g -Dnote", "-Xmx1536m -Dnote")
                    .replace("1344Mi", SYNC_LIMIT_AFTER)
                + """
                ...
                ---\s
                # Source: tidewater/templates/rate-quoter.yaml
                apiVersion: apps/v1
                kind: Deployment
                metadata:
                  name: rate-quoter
                  labels:
                    heapherd.dev/pool: dispatch
                spec:
                  replicas: 4
                  template:
                    spec:
                      containers:
                      - name: app
                        env:
                        - name: JAVA_TOOL_OPTIONS
                          value: -XX:+UseG1GC -Xmx1536m
                        resources:
                          limits:
                            memory: 1850Mi
                          requests:
                            memory: 1850Mi
                """);
  }

  @Test
  void resizesAStatefulSetAndKeepsItsVolumeClaims() throws IOException {
    Path manifests = example();
    Path ledger = manifests.resolve("payments/billing-ledger.yaml");

    assertThat(render(POOL, manifests).exitCode()).isEqualTo(Main.EXIT_CHANGES);

    JsonNode app = container(ledger, "billing-ledger", "app");
    assertThat(options(app)).isEqualTo("-XX:+UseG1GC -Xmx5475m -XX:+ExitOnOutOfMemoryError");
    assertThat(app.at("/resources/limits/memory").asText()).isEqualTo("6051Mi");
    assertThat(Files.readString(ledger)).contains("storage: 20Gi").contains("clusterIP: None");
  }

  @Test
  void leavesWorkloadsOfOtherNamespacesAlone() throws IOException {
    Path manifests = example();
    String sync = Files.readString(manifests.resolve("warehouse-sync.yaml"));
    String staging =
        replaceOnce(
            sync, "  name: warehouse-sync\n", "  name: warehouse-sync\n  namespace: staging\n");
    Files.createDirectories(manifests.resolve("staging"));
    Path other = Files.writeString(manifests.resolve("staging/warehouse-sync.yaml"), staging);

    PlanRun run = render(POOL, manifests);

    assertThat(run.exitCode()).as("stderr: %s", run.err()).isEqualTo(Main.EXIT_CHANGES);
    assertThat(Files.readString(other)).isEqualTo(staging);
    assertThat(
            options(container(manifests.resolve("warehouse-sync.yaml"), "warehouse-sync", "app")))
        .isEqualTo(SYNC_OPTIONS_AFTER);
  }

  @Test
  void leavesAnOptedOutWorkloadAloneAndCountsItsMemory() throws IOException {
    Path manifests = example();
    Path planner = manifests.resolve("route-planner.yaml");
    String optedOut =
        replaceOnce(
            Files.readString(planner),
            "  name: route-planner\n  namespace: tidewater-dispatch\n  labels:",
            "  name: route-planner\n  namespace: tidewater-dispatch\n"
                + "  annotations:\n    heapherd.dev/opt-out: \"true\"\n  labels:");
    Files.writeString(planner, optedOut);

    PlanRun run = render(POOL, manifests);

    assertThat(run.exitCode()).isEqualTo(Main.EXIT_CHANGES);
    assertThat(Files.readString(planner)).isEqualTo(optedOut);
    // Its 3 pods x 4608Mi stay, so the others share what is left of the budget. billing-ledger's
    // small cut stays below the threshold, which leaves too little room for rate-quoter to grow.
    assertThat(run.out())
        .contains("Unchanged: route-planner: held: opted out by annotation")
        .contains(
            "Unchanged: billing-ledger: a 4.8% limit change (heap 4.2%) is below the 5% threshold")
        .contains("Unchanged: rate-quoter: growing it would take the pool's pods to 72.62Gi,");
    assertThat(memoryOfAllPods(manifests)).isLessThanOrEqualTo(BUDGET_BYTES);
  }

  @Test
  void keepsEveryPlanWithinTheBudget() throws IOException {
    Path manifests = example();

    render(POOL, manifests);

    assertThat(memoryOfAllPods(manifests)).isLessThanOrEqualTo(BUDGET_BYTES);
  }

  @Test
  void skipsChangesBelowTheThreshold() throws IOException {
    Path manifests = example();
    Map<String, String> before = contents(manifests);
    Path pool = pool("  rollout:\n    changeThresholdPercent: 60\n");

    PlanRun run = render(pool, manifests);

    assertThat(run.exitCode()).isZero();
    assertThat(run.out())
        .contains("no manifest changes")
        .contains("customs-docs: a 49.0% heap change is below the 60% threshold");
    assertThat(contents(manifests)).isEqualTo(before);
  }

  @Test
  void writesADocumentAnewWhenAValueToSetIsMissing() throws IOException {
    Path manifests = example();
    Path sync = manifests.resolve("warehouse-sync.yaml");
    Files.writeString(
        sync,
        """
        # Warehouse sync: no heap set yet, the image's defaults size it.
        apiVersion: apps/v1
        kind: Deployment
        metadata:
          name: warehouse-sync
          labels:
            heapherd.dev/pool: dispatch
            version: "2"
        spec:
          replicas: 2
          selector:
            matchLabels:
              app.kubernetes.io/name: warehouse-sync
          template:
            metadata:
              labels:
                app.kubernetes.io/name: warehouse-sync
            spec:
              containers:
                - name: app # the whole service
                  image: registry.tidewater.example/dispatch/warehouse-sync:2.14.0
        ---
        # The next document stays as written.
        apiVersion: v1
        kind: Service
        metadata: {name: warehouse-sync}
        """);

    PlanRun run = render(POOL, manifests);

    assertThat(run.exitCode()).isEqualTo(Main.EXIT_CHANGES);
    assertThat(run.out())
        .contains("none -> 1.50Gi")
        .contains("Written anew, comments and layout not kept: Deployment warehouse-sync");
    String text = Files.readString(sync);
    assertThat(text)
        .startsWith("# Warehouse sync: no heap set yet")
        .doesNotContain("# the whole service")
        .endsWith(
            "---\n# The next document stays as written.\napiVersion: v1\nkind: Service\n"
                + "metadata: {name: warehouse-sync}\n");
    JsonNode app = container(sync, "warehouse-sync", "app");
    assertThat(app.at("/env/0/name").asText()).isEqualTo("JAVA_TOOL_OPTIONS");
    assertThat(options(app)).isEqualTo("-Xmx1536m");
    assertThat(app.at("/resources/limits/memory").asText()).isEqualTo(SYNC_LIMIT_AFTER);
    assertThat(document(sync, "warehouse-sync").at("/metadata/labels/version").isTextual())
        .isTrue();
    assertThat(render(POOL, manifests).exitCode()).isZero();
  }

  @Test
  void resizesTheNamedContainerOnly() throws IOException {
    Path manifests = example();
    Path sync = manifests.resolve("warehouse-sync.yaml");
    Files.writeString(
        sync,
        replaceOnce(
            Files.readString(sync),
            "      containers:\n",
            """
                  containers:
                    - name: log-shipper
                      image: registry.tidewater.example/tools/log-shipper:1.3.0
                      env:
                        - name: JAVA_TOOL_OPTIONS
                          value: -Xmx64m
                      resources:
                        limits:
                          memory: 128Mi
            """));
    Path pool = pool("  rollout:\n    containerName: app\n");

    assertThat(render(pool, manifests).exitCode()).isEqualTo(Main.EXIT_CHANGES);

    JsonNode shipper = container(sync, "warehouse-sync", "log-shipper");
    assertThat(options(shipper)).isEqualTo("-Xmx64m");
    assertThat(shipper.at("/resources/limits/memory").asText()).isEqualTo("128Mi");
    assertThat(options(container(sync, "warehouse-sync", "app"))).isNotEqualTo(SYNC_OPTIONS_BEFORE);
  }

  @Test
  void writesTheInitialHeapAndLeavesTheRequestWhenThePoolSaysSo() throws IOException {
    Path manifests = example();
    Path pool = pool("  rollout:\n    setInitialHeap: true\n    setMemoryRequest: false\n");

    assertThat(render(pool, manifests).exitCode()).isEqualTo(Main.EXIT_CHANGES);

    JsonNode app = container(manifests.resolve("warehouse-sync.yaml"), "warehouse-sync", "app");
    assertThat(options(app)).isEqualTo(SYNC_OPTIONS_AFTER + " -Xms1536m");
    assertThat(app.at("/resources/limits/memory").asText()).isEqualTo(SYNC_LIMIT_AFTER);
    assertThat(app.at("/resources/requests/memory").asText()).isEqualTo(SYNC_LIMIT_BEFORE);
  }

  @Test
  void keepsJsonManifestsJsonAndChangesOnlyTheValues() throws IOException {
    Path manifests = example();
    Path yaml = manifests.resolve("warehouse-sync.yaml");
    String json =
        new ObjectMapper()
                .writerWithDefaultPrettyPrinter()
                .writeValueAsString(YAML.readTree(Files.readString(yaml)))
            + "\n";
    Files.delete(yaml);
    Path file = Files.writeString(manifests.resolve("warehouse-sync.json"), json);

    assertThat(render(POOL, manifests).exitCode()).isEqualTo(Main.EXIT_CHANGES);

    assertThat(Files.readString(file))
        .isEqualTo(
            json.replace(SYNC_OPTIONS_BEFORE, SYNC_OPTIONS_AFTER)
                .replace("\"" + SYNC_LIMIT_BEFORE + "\"", "\"" + SYNC_LIMIT_AFTER + "\""));
    assertThat(new ObjectMapper().readTree(file.toFile()).isObject()).isTrue();
  }

  @Test
  void keepsWindowsLineEndings() throws IOException {
    Path manifests = example();
    Path sync = manifests.resolve("warehouse-sync.yaml");
    String crlf = Files.readString(sync).replace("\n", "\r\n");
    Files.writeString(sync, crlf);

    assertThat(render(POOL, manifests).exitCode()).isEqualTo(Main.EXIT_CHANGES);

    assertThat(Files.readString(sync))
        .isEqualTo(
            crlf.replace(SYNC_OPTIONS_BEFORE, SYNC_OPTIONS_AFTER)
                .replace(SYNC_LIMIT_BEFORE, SYNC_LIMIT_AFTER));
  }

  @Test
  void countsAWorkloadWithoutReplicasAsItsMeasuredPods() throws IOException {
    Path manifests = example();
    Path planner = manifests.resolve("route-planner.yaml");
    Files.writeString(planner, replaceOnce(Files.readString(planner), "  replicas: 3\n", ""));

    assertThat(render(POOL, manifests).exitCode()).isEqualTo(Main.EXIT_CHANGES);

    // The same heap as with replicas: 3 written out (see leavesOtherDocumentsAndFilesByteForByte).
    assertThat(options(container(planner, "route-planner", "app"))).contains("-Xmx5319m");
  }

  @Test
  void namesMeasuredWorkloadsThatAreNotInTheManifests() throws IOException {
    Path manifests = example();
    Files.delete(manifests.resolve("notification-relay.yaml"));

    PlanRun run = render(POOL, manifests);

    assertThat(run.exitCode()).isEqualTo(Main.EXIT_CHANGES);
    assertThat(run.out())
        .contains(
            "In the metrics but not among the pool's manifests, so neither planned nor counted"
                + " in the budget: notification-relay");
  }

  @Test
  void rejectsAMissingFolder() {
    Path missing = dir.resolve("nowhere");

    render(POOL, missing).assertRejected(missing, "", "no such folder");
  }

  @Test
  void rejectsMalformedYamlNamingTheFileAndLine() throws IOException {
    Path manifests = example();
    Path planner = manifests.resolve("route-planner.yaml");
    String broken =
        replaceOnce(
            Files.readString(planner), "  ports:\n    - port: 80\n", "  ports:\n\t- port: 80\n");
    Files.writeString(planner, broken);
    long line =
        broken.substring(0, broken.indexOf('\t')).chars().filter(c -> c == '\n').count() + 1;

    render(POOL, manifests)
        .assertRejected(planner, "line " + line + ", column 1", "malformed YAML");
  }

  @Test
  void rejectsAPoolThatSelectsNoWorkload() throws IOException {
    Path manifests = example();
    Path pool =
        write(
            "pool.yaml",
            replaceOnce(
                Files.readString(POOL), "heapherd.dev/pool: dispatch", "heapherd.dev/pool: yard"));

    render(pool, manifests)
        .assertRejected(
            pool, "spec.selector.matchLabels", "no Deployment or StatefulSet in " + manifests);
  }

  @Test
  void rejectsAContainerThatIsNotThere() throws IOException {
    Path manifests = example();
    Path pool = pool("  rollout:\n    containerName: jvm\n");

    render(pool, manifests)
        .assertRejected(
            manifests.resolve("customs-docs.yaml"),
            "line 2",
            "Deployment customs-docs: has no container named \"jvm\"");
  }

  @Test
  void rejectsJvmOptionsTakenFromAConfigMap() throws IOException {
    Path manifests = example();
    Path sync = manifests.resolve("warehouse-sync.yaml");
    Files.writeString(
        sync,
        replaceOnce(
            Files.readString(sync),
            "              value: \"" + SYNC_OPTIONS_BEFORE + "\"\n",
            """
                          valueFrom:
                            configMapKeyRef: {name: warehouse-sync-jvm, key: options}
            """));

    render(POOL, manifests)
        .assertRejected(
            sync,
            "line 2",
            "Deployment warehouse-sync: takes JAVA_TOOL_OPTIONS from a reference (ConfigMap,");
  }

  @Test
  void rejectsTheSameWorkloadTwice() throws IOException {
    Path manifests = example();
    Files.createDirectories(manifests.resolve("overlay"));
    Path copy =
        Files.copy(
            manifests.resolve("warehouse-sync.yaml"),
            manifests.resolve("overlay/warehouse-sync.yaml"));

    // Files are read in path order, so the copy under overlay/ comes first.
    render(POOL, manifests)
        .assertRejected(
            manifests.resolve("warehouse-sync.yaml"),
            "line 2",
            "Deployment warehouse-sync: the pool already has a Deployment of this name in "
                + copy
                + " line 2");
  }

  @Test
  void rejectsAFieldOfTheWrongType() throws IOException {
    Path manifests = example();
    Path quoter = manifests.resolve("rate-quoter.yaml");
    Files.writeString(
        quoter, replaceOnce(Files.readString(quoter), "replicas: 4", "replicas: four"));

    render(POOL, manifests)
        .assertRejected(
            quoter, "line 2", "Deployment rate-quoter: spec.replicas: Cannot deserialize");
  }

  @Test
  void rejectsAnOverrideForAWorkloadNotInTheManifests() throws IOException {
    Path manifests = example();
    Files.delete(manifests.resolve("rate-quoter.yaml"));

    render(POOL, manifests)
        .assertRejected(
            POOL,
            "spec.overrides[1].name",
            "workload \"rate-quoter\" is not among the pool's workloads in " + manifests);
  }

  @Test
  void rejectsAnOutputFolderInsideTheManifests() throws IOException {
    Path manifests = example();

    render(POOL, manifests, "--output", manifests.resolve("out").toString())
        .assertRejected(Path.of("--output"), "", "overlaps --manifests");
  }

  @Test
  void neverWritesThroughALinkInTheOutputFolder() throws IOException {
    Path manifests = example();
    Path outside = write("outside.yaml", "kept: true\n");
    Path out = Files.createDirectories(dir.resolve("rendered"));
    Files.createSymbolicLink(out.resolve("warehouse-sync.yaml"), outside);

    render(POOL, manifests, "--output", out.toString())
        .assertRejected(
            out.resolve("warehouse-sync.yaml").toAbsolutePath(), "", "is a symbolic link");

    assertThat(Files.readString(outside)).isEqualTo("kept: true\n");
    assertThat(contents(out)).containsOnlyKeys("warehouse-sync.yaml");
  }

  @Test
  void refusesASymbolicLinkAmongTheManifestsRatherThanDroppingItsWorkloads() throws IOException {
    Path manifests = example();
    Path moved = Files.move(manifests.resolve("warehouse-sync.yaml"), dir.resolve("sync.yaml"));
    Files.createSymbolicLink(manifests.resolve("warehouse-sync.yaml"), moved);
    Map<String, String> before = contents(manifests);

    render(POOL, manifests)
        .assertRejected(manifests.resolve("warehouse-sync.yaml"), "", "is a symbolic link");
    assertThat(contents(manifests)).isEqualTo(before);
  }

  @Test
  void aTargetThatCannotBeWrittenLeavesEveryFileAsItWas() throws IOException {
    Path manifests = example();
    Path out = Files.createDirectories(dir.resolve("rendered"));
    // The last file to write is a folder in the output: nothing may be written before the
    // problem is found.
    List<String> names;
    try (Stream<Path> files = Files.list(manifests)) {
      names = files.map(p -> p.getFileName().toString()).sorted().toList();
    }
    Files.createDirectories(out.resolve(names.get(names.size() - 1)));

    PlanRun run = render(POOL, manifests, "--output", out.toString());

    assertThat(run.exitCode()).isEqualTo(Main.EXIT_BAD_INPUT);
    assertThat(run.err()).contains("not a regular file");
    try (Stream<Path> files = Files.list(out)) {
      assertThat(files.filter(Files::isRegularFile).toList()).isEmpty();
    }
  }

  @Test
  void writesTheReviewPageBesideAChecksManifestsUntouched() throws IOException {
    Path manifests = example();
    Map<String, String> before = contents(manifests);
    Path report = dir.resolve("review/dispatch.html");
    Files.createDirectories(report.getParent());

    PlanRun run = render(POOL, manifests, "--check", "--report", report.toString());

    assertThat(run.exitCode()).as("stderr: %s", run.err()).isEqualTo(Main.EXIT_CHANGES);
    assertThat(contents(manifests)).isEqualTo(before);
    String page = Files.readString(report);
    assertThat(page).startsWith("<!DOCTYPE html>").contains("data-workload=\"warehouse-sync\"");
    assertThat(page).contains("Caution: ");
  }

  @Test
  void theReviewPageShowsSidecarMemoryTakenFromTheBudget() throws IOException {
    Path manifests = example();
    Path sync = manifests.resolve("warehouse-sync.yaml");
    // A log shipper beside the JVM in each of the two pods: 2 x 256Mi heapherd never resizes.
    Files.writeString(
        sync,
        Files.readString(sync)
            + "        - name: log-shipper\n"
            + "          image: registry.tidewater.example/ops/log-shipper:1.4\n"
            + "          resources:\n"
            + "            limits:\n"
            + "              memory: 256Mi\n");
    Path report = dir.resolve("review.html");

    PlanRun run = render(POOL, manifests, "--check", "--report", report.toString());

    assertThat(run.exitCode()).as("stderr: %s", run.err()).isEqualTo(Main.EXIT_CHANGES);
    String page = Files.readString(report);
    assertThat(page)
        .contains("<h2>Budget 72Gi,")
        .contains("<tr><td>S</td>")
        .contains("data-bytes=\"" + 2 * 256 * MIB + "\"");
  }

  @Test
  void neverWritesTheReviewPageThroughALink() throws IOException {
    Path manifests = example();
    Path outside = write("outside.html", "kept\n");
    Path link = Files.createSymbolicLink(dir.resolve("review.html"), outside);

    render(POOL, manifests, "--check", "--report", link.toString())
        .assertRejected(link.toAbsolutePath(), "", "is a symbolic link");
    assertThat(Files.readString(outside)).isEqualTo("kept\n");
  }

  @Test
  void needsExactlyOneMetricsSource() throws IOException {
    Path manifests = example();

    PlanRun.run("render", "--pool", POOL.toString(), "--manifests", manifests.toString())
        .assertRejected(Path.of("render"), "", "give exactly one of --snapshot or --prometheus");
  }

  @Test
  void refusesInOneLineWhenPrometheusCannotBeReached() throws IOException {
    Path manifests = example();
    Map<String, String> before = contents(manifests);

    PlanRun run =
        PlanRun.run(
            "render",
            "--pool",
            POOL.toString(),
            "--prometheus",
            SnapshotCommandTest.deadPrometheus(),
            "--timeout-seconds",
            "2",
            "--manifests",
            manifests.toString());

    assertThat(run.exitCode()).isEqualTo(Main.EXIT_BAD_INPUT);
    assertThat(run.out()).isEmpty();
    assertThat(run.err().strip().lines()).hasSize(1);
    assertThat(run.err()).contains("no workload was measured").contains("cannot connect");
    assertThat(contents(manifests)).isEqualTo(before);
  }

  // --- helpers ---

  private static PlanRun render(Path pool, Path manifests, String... options) {
    List<String> args =
        new ArrayList<>(
            List.of(
                "render",
                "--pool",
                pool.toString(),
                "--snapshot",
                SNAPSHOT.toString(),
                "--manifests",
                manifests.toString()));
    args.addAll(List.of(options));
    return PlanRun.run(args.toArray(String[]::new));
  }

  /** A copy of the bundled example's manifests. */
  private Path example() throws IOException {
    return ExampleManifests.copyInto(dir);
  }

  /** The example pool with {@code spec} lines added at the end of its spec. */
  private Path pool(String spec) throws IOException {
    return write("pool-variant.yaml", Files.readString(POOL) + spec);
  }

  private Path write(String name, String text) throws IOException {
    return Files.writeString(dir.resolve(name), text);
  }

  private static Map<String, String> contents(Path root) throws IOException {
    return ExampleManifests.contents(root);
  }

  /** The Deployment or StatefulSet {@code name} in a YAML or JSON file. */
  private static JsonNode document(Path file, String name) throws IOException {
    try (var docs = YAML.readerFor(JsonNode.class).<JsonNode>readValues(file.toFile())) {
      while (docs.hasNext()) {
        JsonNode d = docs.next();
        if (d != null
            && d.path("kind").asText().matches("Deployment|StatefulSet")
            && name.equals(d.at("/metadata/name").asText())) {
          return d;
        }
      }
    }
    throw new AssertionError("no workload " + name + " in " + file);
  }

  private static JsonNode container(Path file, String workload, String container)
      throws IOException {
    for (JsonNode c : document(file, workload).at("/spec/template/spec/containers")) {
      if (container.equals(c.path("name").asText())) {
        return c;
      }
    }
    throw new AssertionError("no container " + container + " in " + workload);
  }

  private static String options(JsonNode container) {
    for (JsonNode e : container.path("env")) {
      if ("JAVA_TOOL_OPTIONS".equals(e.path("name").asText())) {
        return e.path("value").asText();
      }
    }
    return null;
  }

  /** Replicas x memory limit summed over every workload in the folder, as the budget counts. */
  private static long memoryOfAllPods(Path manifests) throws IOException {
    long total = 0;
    try (Stream<Path> files = Files.walk(manifests)) {
      for (Path f : files.filter(p -> p.toString().endsWith(".yaml")).toList()) {
        try (var docs = YAML.readerFor(JsonNode.class).<JsonNode>readValues(f.toFile())) {
          while (docs.hasNext()) {
            JsonNode d = docs.next();
            if (d != null && d.path("kind").asText().matches("Deployment|StatefulSet")) {
              String limit =
                  d.at("/spec/template/spec/containers/0/resources/limits/memory").asText();
              total += d.at("/spec/replicas").asLong() * Quantity.parseBytes(limit);
            }
          }
        }
      }
    }
    return total;
  }

  /** The lines of {@code now} that differ from the same line of {@code was}. */
  private static List<String> changedLines(String was, String now) {
    List<String> a = was.lines().toList();
    List<String> b = now.lines().toList();
    assertThat(b).hasSameSizeAs(a);
    List<String> out = new ArrayList<>();
    for (int i = 0; i < a.size(); i++) {
      if (!a.get(i).equals(b.get(i))) {
        out.add(b.get(i));
      }
    }
    return out;
  }
}
