package dev.heapherd.rollout;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import io.fabric8.kubernetes.api.model.Container;
import io.fabric8.kubernetes.api.model.ContainerBuilder;
import io.fabric8.kubernetes.api.model.EnvVar;
import io.fabric8.kubernetes.api.model.EnvVarBuilder;
import io.fabric8.kubernetes.api.model.PodTemplateSpec;
import io.fabric8.kubernetes.api.model.PodTemplateSpecBuilder;
import io.fabric8.kubernetes.api.model.Quantity;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Reading and rewriting the memory settings of the pod template of Larkspur Freight's quote-api: an
 * "app" container running the JVM beside a log-shipper and a metrics-relay sidecar.
 */
class PodTemplatesTest {

  private static final long MIB = 1024L * 1024L;

  private static final String VARIABLE = "JAVA_TOOL_OPTIONS";
  private static final String APP = "app";
  private static final String OPTIONS =
      "-XX:+UseG1GC -Xmx1g -Dlarkspur.region=eu-west -Xss512k -XX:+ExitOnOutOfMemoryError";

  private static final EnvVar REGION = new EnvVar("LARKSPUR_REGION", "eu-west", null);
  private static final EnvVar POOL_SIZE = new EnvVar("QUOTE_DB_POOL_SIZE", "24", null);

  private static Container logShipper() {
    return new ContainerBuilder()
        .withName("log-shipper")
        .withImage("registry.larkspur.example/log-shipper:2.4.1")
        .withNewResources()
        .addToLimits("memory", new Quantity("128Mi"))
        .addToLimits("cpu", new Quantity("100m"))
        .endResources()
        .addNewEnv()
        .withName(VARIABLE)
        .withValue("-Xmx64m")
        .endEnv()
        .build();
  }

  private static Container metricsRelay() {
    return new ContainerBuilder()
        .withName("metrics-relay")
        .withImage("registry.larkspur.example/metrics-relay:0.9.0")
        .withNewResources()
        .addToLimits("memory", new Quantity("64Mi"))
        .endResources()
        .build();
  }

  private static ContainerBuilder app() {
    return new ContainerBuilder()
        .withName(APP)
        .withImage("registry.larkspur.example/quote-api:5.12.0")
        .withArgs("--port=8080")
        .withNewResources()
        .addToLimits("memory", new Quantity("1280Mi"))
        .addToLimits("cpu", new Quantity("2"))
        .addToRequests("memory", new Quantity("1Gi"))
        .addToRequests("cpu", new Quantity("500m"))
        .endResources()
        .withEnv(
            REGION, new EnvVarBuilder().withName(VARIABLE).withValue(OPTIONS).build(), POOL_SIZE);
  }

  /** The sidecar first, so choosing by name and choosing the first one differ. */
  private static PodTemplateSpec template(Container app) {
    return new PodTemplateSpecBuilder()
        .withNewMetadata()
        .addToLabels("app", "quote-api")
        .endMetadata()
        .withNewSpec()
        .withContainers(logShipper(), app, metricsRelay())
        .endSpec()
        .build();
  }

  private static PodTemplateSpec quoteApi() {
    return template(app().build());
  }

  private static Container container(PodTemplateSpec template, String name) {
    return template.getSpec().getContainers().stream()
        .filter(c -> name.equals(c.getName()))
        .findFirst()
        .orElseThrow();
  }

  private static Map<String, Quantity> limits(PodTemplateSpec template) {
    return container(template, APP).getResources().getLimits();
  }

  private static Map<String, Quantity> requests(PodTemplateSpec template) {
    return container(template, APP).getResources().getRequests();
  }

  private static String options(PodTemplateSpec template) {
    return PodTemplates.read(template, APP, VARIABLE).orElseThrow().jvmOptions();
  }

  @Test
  void readsTheNamedContainerAndSumsTheOtherContainersLimits() {
    var m = PodTemplates.read(quoteApi(), APP, VARIABLE).orElseThrow();

    assertThat(m.containerName()).isEqualTo(APP);
    assertThat(m.limit()).isEqualTo("1280Mi");
    assertThat(m.request()).isEqualTo("1Gi");
    assertThat(m.jvmOptions()).isEqualTo(OPTIONS);
    assertThat(m.jvmOptionsFromReference()).isFalse();
    // log-shipper 128Mi + metrics-relay 64Mi; CPU limits are not memory.
    assertThat(m.otherContainersLimitBytes()).isEqualTo(192 * MIB);
    assertThat(m.limitBytes()).hasValue(1280 * MIB);
    assertThat(m.heapBytes()).hasValue(1024 * MIB);
  }

  @Test
  void aSidecarLimitThatIsNotWholeBytesIsAProblemNotHalfAByte() {
    PodTemplateSpec t = quoteApi();
    container(t, "log-shipper").getResources().getLimits().put("memory", new Quantity("512m"));
    var m = PodTemplates.read(t, APP, VARIABLE).orElseThrow();

    // Kubernetes reads 512m as 0.512 bytes (its quantity grammar, "m" is milli); counted so, the
    // sidecar's memory would have gone to the heap.
    assertThat(m.problem())
        .hasValueSatisfying(
            p -> assertThat(p).contains("\"log-shipper\"").contains("thousandths of a byte"));
  }

  @Test
  void readsTheFirstContainerWhenNoNameIsGiven() {
    var m = PodTemplates.read(quoteApi(), "", VARIABLE).orElseThrow();

    assertThat(m.containerName()).isEqualTo("log-shipper");
    assertThat(m.limit()).isEqualTo("128Mi");
    assertThat(m.request()).isNull();
    assertThat(m.jvmOptions()).isEqualTo("-Xmx64m");
    assertThat(m.otherContainersLimitBytes()).isEqualTo((1280 + 64) * MIB);
  }

  @Test
  void isEmptyWhenTheNamedContainerIsMissing() {
    assertThat(PodTemplates.read(quoteApi(), "pricing-engine", VARIABLE)).isEmpty();
  }

  @Test
  void isEmptyWhenTheTemplateHasNoContainers() {
    PodTemplateSpec empty = new PodTemplateSpecBuilder().withNewSpec().endSpec().build();

    assertThat(PodTemplates.read(empty, "", VARIABLE)).isEmpty();
  }

  @Test
  void reportsUnsetMemoryAndAMissingVariableAsNull() {
    Container bare =
        new ContainerBuilder()
            .withName(APP)
            .withImage("registry.larkspur.example/quote-api:5.12.0")
            .build();

    var m = PodTemplates.read(template(bare), APP, VARIABLE).orElseThrow();

    assertThat(m.limit()).isNull();
    assertThat(m.request()).isNull();
    assertThat(m.jvmOptions()).isNull();
    assertThat(m.jvmOptionsFromReference()).isFalse();
    assertThat(m.limitBytes()).isEmpty();
    assertThat(m.heapBytes()).isEmpty();
  }

  @Test
  void reportsAVariableThatTakesItsValueFromAConfigMap() {
    Container fromConfigMap =
        app()
            .withEnv(
                new EnvVarBuilder()
                    .withName(VARIABLE)
                    .withNewValueFrom()
                    .withNewConfigMapKeyRef("jvm-options", "quote-api-jvm", false)
                    .endValueFrom()
                    .build())
            .build();

    var m = PodTemplates.read(template(fromConfigMap), APP, VARIABLE).orElseThrow();

    assertThat(m.jvmOptionsFromReference()).isTrue();
    assertThat(m.jvmOptions()).isNull();
  }

  @Test
  void resizedSetsTheLimitInWholeMibAndRewritesOnlyTheHeapFlag() {
    PodTemplateSpec resized =
        PodTemplates.resized(quoteApi(), APP, VARIABLE, 1280 * MIB, 1536 * MIB, false, false);

    assertThat(limits(resized)).containsEntry("memory", new Quantity("1536Mi"));
    assertThat(limits(resized)).containsEntry("cpu", new Quantity("2"));
    assertThat(requests(resized))
        .containsEntry("memory", new Quantity("1Gi"))
        .containsEntry("cpu", new Quantity("500m"));
    assertThat(container(resized, APP).getEnv())
        .containsExactly(
            REGION,
            new EnvVar(
                VARIABLE,
                "-XX:+UseG1GC -Xmx1280m -Dlarkspur.region=eu-west -Xss512k"
                    + " -XX:+ExitOnOutOfMemoryError",
                null),
            POOL_SIZE);
  }

  @Test
  void resizedLeavesEverythingButTheChosenContainersMemoryAlone() {
    PodTemplateSpec before = quoteApi();

    PodTemplateSpec resized =
        PodTemplates.resized(before, APP, VARIABLE, 1280 * MIB, 1536 * MIB, true, true);

    assertThat(resized.getMetadata()).isEqualTo(before.getMetadata());
    assertThat(container(resized, "log-shipper")).isEqualTo(logShipper());
    assertThat(container(resized, "metrics-relay")).isEqualTo(metricsRelay());
    assertThat(resized.getSpec().getContainers())
        .extracting(Container::getName)
        .containsExactly("log-shipper", APP, "metrics-relay");
    Container app = container(resized, APP);
    assertThat(app.getImage()).isEqualTo("registry.larkspur.example/quote-api:5.12.0");
    assertThat(app.getArgs()).containsExactly("--port=8080");
  }

  @Test
  void resizedDoesNotChangeTheTemplateItWasGiven() {
    // Templates come from the informer's cache, which must never be edited in place.
    PodTemplateSpec before = quoteApi();

    PodTemplates.resized(before, APP, VARIABLE, 1280 * MIB, 1536 * MIB, true, true);

    assertThat(before).isEqualTo(quoteApi());
  }

  @Test
  void resizedSetsTheRequestToTheLimitOnlyWhenAsked() {
    PodTemplateSpec withRequest =
        PodTemplates.resized(quoteApi(), APP, VARIABLE, 1280 * MIB, 1536 * MIB, true, false);
    PodTemplateSpec withoutRequest =
        PodTemplates.resized(quoteApi(), APP, VARIABLE, 1280 * MIB, 1536 * MIB, false, false);

    assertThat(requests(withRequest)).containsEntry("memory", new Quantity("1536Mi"));
    assertThat(requests(withoutRequest)).containsEntry("memory", new Quantity("1Gi"));
  }

  @Test
  void resizedWritesTheInitialHeapOnlyWhenAsked() {
    PodTemplateSpec withInitial =
        PodTemplates.resized(quoteApi(), APP, VARIABLE, 1280 * MIB, 1536 * MIB, false, true);
    PodTemplateSpec withoutInitial =
        PodTemplates.resized(quoteApi(), APP, VARIABLE, 1280 * MIB, 1536 * MIB, false, false);

    assertThat(options(withInitial))
        .isEqualTo(
            "-XX:+UseG1GC -Xmx1280m -Xms1280m -Dlarkspur.region=eu-west -Xss512k"
                + " -XX:+ExitOnOutOfMemoryError");
    assertThat(options(withoutInitial)).doesNotContain("-Xms");
  }

  @Test
  void resizedAddsTheVariableAfterTheOthersWhenItIsAbsent() {
    PodTemplateSpec noOptions = template(app().withEnv(REGION, POOL_SIZE).build());

    PodTemplateSpec resized =
        PodTemplates.resized(noOptions, APP, VARIABLE, 768 * MIB, 1024 * MIB, false, false);

    assertThat(container(resized, APP).getEnv())
        .containsExactly(REGION, POOL_SIZE, new EnvVar(VARIABLE, "-Xmx768m", null));
  }

  @Test
  void resizedFillsInAContainerWithoutEnvOrResources() {
    Container bare =
        new ContainerBuilder()
            .withName(APP)
            .withImage("registry.larkspur.example/quote-api:5.12.0")
            .build();

    PodTemplateSpec resized =
        PodTemplates.resized(template(bare), APP, VARIABLE, 768 * MIB, 1024 * MIB, false, false);

    assertThat(container(resized, APP).getEnv())
        .containsExactly(new EnvVar(VARIABLE, "-Xmx768m", null));
    assertThat(limits(resized)).containsOnly(Map.entry("memory", new Quantity("1024Mi")));
    assertThat(requests(resized)).doesNotContainKey("memory");
  }

  @Test
  void resizedChoosesTheFirstContainerWhenNoNameIsGiven() {
    PodTemplateSpec resized =
        PodTemplates.resized(quoteApi(), "", VARIABLE, 96 * MIB, 160 * MIB, false, false);

    Container shipper = container(resized, "log-shipper");
    assertThat(shipper.getResources().getLimits())
        .containsEntry("memory", new Quantity("160Mi"))
        .containsEntry("cpu", new Quantity("100m"));
    assertThat(shipper.getEnv()).containsExactly(new EnvVar(VARIABLE, "-Xmx96m", null));
    assertThat(container(resized, APP)).isEqualTo(app().build());
  }

  @Test
  void resizedRejectsAMissingContainer() {
    assertThatThrownBy(
            () ->
                PodTemplates.resized(
                    quoteApi(), "pricing-engine", VARIABLE, 768 * MIB, 1024 * MIB, false, false))
        .isInstanceOf(IllegalArgumentException.class)
        .hasMessageContaining("pricing-engine");
  }

  @ParameterizedTest
  @CsvSource({
    "1610612736, 1536Mi",
    "1073741824, 1024Mi",
    "1610612737, 1537Mi",
    "1048575, 1Mi",
    "1, 1Mi"
  })
  void mebibytesIsExactAndRoundsUp(long bytes, String quantity) {
    assertThat(PodTemplates.mebibytes(bytes)).isEqualTo(quantity);
  }

  @Test
  void restoredPutsBackWhatTheRecordSaved() {
    PodTemplateSpec before = quoteApi();
    RolloutRecord record = recordOf(before);
    PodTemplateSpec resized =
        PodTemplates.resized(before, APP, VARIABLE, 1280 * MIB, 1536 * MIB, true, true);

    PodTemplateSpec restored = PodTemplates.restored(resized, APP, VARIABLE, record);

    assertThat(restored).isEqualTo(before);
  }

  @Test
  void restoredRemovesWhatWasAbsentBefore() {
    Container bare =
        new ContainerBuilder()
            .withName(APP)
            .withImage("registry.larkspur.example/quote-api:5.12.0")
            .withNewResources()
            .addToLimits("cpu", new Quantity("2"))
            .endResources()
            .withEnv(REGION)
            .build();
    PodTemplateSpec before = template(bare);
    RolloutRecord record = recordOf(before);
    PodTemplateSpec resized =
        PodTemplates.resized(before, APP, VARIABLE, 1280 * MIB, 1536 * MIB, true, false);

    PodTemplateSpec restored = PodTemplates.restored(resized, APP, VARIABLE, record);

    var m = PodTemplates.read(restored, APP, VARIABLE).orElseThrow();
    assertThat(m.limit()).isNull();
    assertThat(m.request()).isNull();
    assertThat(m.jvmOptions()).isNull();
    Container app = container(restored, APP);
    assertThat(app.getEnv()).containsExactly(REGION);
    assertThat(app.getResources().getLimits()).containsOnly(Map.entry("cpu", new Quantity("2")));
    assertThat(restored.getSpec().getContainers())
        .filteredOn(c -> !APP.equals(c.getName()))
        .containsExactly(logShipper(), metricsRelay());
  }

  @Test
  void restoredKeepsChangesMadeToOtherFieldsSinceTheStart() {
    // Someone bumped the image while the rollout ran; only memory settings go back.
    PodTemplateSpec before = quoteApi();
    RolloutRecord record = recordOf(before);
    PodTemplateSpec resized =
        PodTemplates.resized(before, APP, VARIABLE, 1280 * MIB, 1536 * MIB, false, false);
    PodTemplateSpec bumped =
        new PodTemplateSpecBuilder(resized)
            .editSpec()
            .editMatchingContainer(c -> APP.equals(c.getName()))
            .withImage("registry.larkspur.example/quote-api:5.12.1")
            .endContainer()
            .endSpec()
            .build();

    PodTemplateSpec restored = PodTemplates.restored(bumped, APP, VARIABLE, record);

    assertThat(container(restored, APP).getImage())
        .isEqualTo("registry.larkspur.example/quote-api:5.12.1");
    assertThat(PodTemplates.read(restored, APP, VARIABLE))
        .isEqualTo(PodTemplates.read(before, APP, VARIABLE));
  }

  @Test
  void restoredRejectsAMissingContainer() {
    RolloutRecord record = recordOf(quoteApi());

    assertThatThrownBy(() -> PodTemplates.restored(quoteApi(), "pricing-engine", VARIABLE, record))
        .isInstanceOf(IllegalArgumentException.class)
        .hasMessageContaining("pricing-engine");
  }

  /** What the rollout writer saves before changing {@code template}. */
  private static RolloutRecord recordOf(PodTemplateSpec template) {
    var m = PodTemplates.read(template, APP, VARIABLE).orElseThrow();
    return new RolloutRecord(
        "proposal-3f9c",
        m.limit(),
        m.request(),
        m.jvmOptions(),
        1280 * MIB,
        1536 * MIB,
        "2025-03-04T10:00:00Z",
        false);
  }
}
