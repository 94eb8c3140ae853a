package dev.heapherd.observe;

import static org.assertj.core.api.Assertions.assertThat;

import dev.heapherd.input.PoolFile;
import dev.heapherd.rollout.Annotations;
import dev.heapherd.rollout.RolloutRecord;
import dev.heapherd.rollout.WorkloadState;
import io.fabric8.kubernetes.api.model.ContainerStatus;
import io.fabric8.kubernetes.api.model.ContainerStatusBuilder;
import io.fabric8.kubernetes.api.model.IntOrString;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.PodBuilder;
import io.fabric8.kubernetes.api.model.PodTemplateSpec;
import io.fabric8.kubernetes.api.model.PodTemplateSpecBuilder;
import io.fabric8.kubernetes.api.model.Quantity;
import io.fabric8.kubernetes.api.model.apps.Deployment;
import io.fabric8.kubernetes.api.model.apps.DeploymentBuilder;
import io.fabric8.kubernetes.api.model.apps.StatefulSetBuilder;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * Observing Larkspur Freight's quote-api Deployment while heapherd rolls its heap from 1 GiB to 768
 * MiB: pods on the new template run the new options, pods still on the old one the old options.
 */
class ObserverTest {

  private static final long MIB = 1024L * 1024L;

  private static final String VARIABLE = "JAVA_TOOL_OPTIONS";
  private static final String OLD_OPTIONS = "-XX:+UseG1GC -Xmx1g -Dlarkspur.region=eu-west";
  private static final String NEW_OPTIONS = "-XX:+UseG1GC -Xmx768m -Dlarkspur.region=eu-west";
  private static final Map<String, String> SELECTOR = Map.of("app", "quote-api");
  private static final long GENERATION = 7L;

  /** The moment every observation in these tests is made. */
  private static final Instant NOW = Instant.parse("2026-12-02T08:00:00Z");

  private static final PoolFile.Rollout ROLLOUT =
      new PoolFile.Rollout("app", VARIABLE, false, false, false, 1, 3600, 5, 600, List.of());

  private static final RolloutRecord IN_FLIGHT =
      new RolloutRecord(
          "proposal-3f9c",
          "1280Mi",
          "1Gi",
          OLD_OPTIONS,
          768 * MIB,
          1024 * MIB,
          "2025-03-04T10:00:00Z",
          false);

  private static PodTemplateSpec template(String options, String appLimit) {
    return new PodTemplateSpecBuilder()
        .withNewMetadata()
        .withLabels(SELECTOR)
        .endMetadata()
        .withNewSpec()
        .addNewContainer()
        .withName("app")
        .withImage("registry.larkspur.example/quote-api:5.12.0")
        .withNewResources()
        .addToLimits("memory", new Quantity(appLimit))
        .endResources()
        .addNewEnv()
        .withName(VARIABLE)
        .withValue(options)
        .endEnv()
        .endContainer()
        .addNewContainer()
        .withName("log-shipper")
        .withImage("registry.larkspur.example/log-shipper:2.4.1")
        .withNewResources()
        .addToLimits("memory", new Quantity("128Mi"))
        .endResources()
        .endContainer()
        .endSpec()
        .build();
  }

  /** quote-api on the new template, 4 replicas, the default strategy, fully rolled out. */
  private static DeploymentBuilder quoteApi() {
    return new DeploymentBuilder()
        .withNewMetadata()
        .withName("quote-api")
        .withNamespace("larkspur-pricing")
        .withGeneration(GENERATION)
        .addToLabels("heapherd.dev/pool", "pricing")
        .endMetadata()
        .withNewSpec()
        .withReplicas(4)
        .withNewSelector()
        .withMatchLabels(SELECTOR)
        .endSelector()
        .withTemplate(template(NEW_OPTIONS, "1Gi"))
        .endSpec()
        .withNewStatus()
        .withObservedGeneration(GENERATION)
        .withReplicas(4)
        .withUpdatedReplicas(4)
        .withAvailableReplicas(4)
        .withReadyReplicas(4)
        .endStatus();
  }

  private static DeploymentBuilder inFlight() {
    return quoteApi()
        .editMetadata()
        .addToAnnotations(Annotations.ROLLOUT, IN_FLIGHT.toJson())
        .endMetadata();
  }

  private static WorkloadState observe(DeploymentBuilder d, Pod... pods) {
    return Observer.observe(new PoolWorkload(d.build()), List.of(pods), ROLLOUT, NOW);
  }

  private static Pod pod(
      String name, Map<String, String> labels, String options, ContainerStatus s) {
    return new PodBuilder()
        .withNewMetadata()
        .withName(name)
        .withLabels(labels)
        .endMetadata()
        .withNewSpec()
        .addNewContainer()
        .withName("app")
        .addNewEnv()
        .withName(VARIABLE)
        .withValue(options)
        .endEnv()
        .endContainer()
        .addNewContainer()
        .withName("log-shipper")
        .endContainer()
        .endSpec()
        .withNewStatus()
        .withContainerStatuses(s)
        .endStatus()
        .build();
  }

  private static Pod newPod(ContainerStatus s) {
    return pod("quote-api-6b7f9-x2k4q", SELECTOR, NEW_OPTIONS, s);
  }

  private static ContainerStatusBuilder app() {
    return new ContainerStatusBuilder().withName("app").withRestartCount(0);
  }

  private static ContainerStatus running() {
    return app().withNewState().withNewRunning().endRunning().endState().build();
  }

  // 137 is 128 + SIGKILL (9), the exit code the kernel's OOM killer leaves.
  private static ContainerStatus oomKilledNow() {
    return app()
        .withNewState()
        .withNewTerminated()
        .withReason("OOMKilled")
        .withExitCode(137)
        .endTerminated()
        .endState()
        .build();
  }

  private static ContainerStatus oomKilledBefore() {
    return app()
        .withRestartCount(1)
        .withNewState()
        .withNewRunning()
        .endRunning()
        .endState()
        .withNewLastState()
        .withNewTerminated()
        .withReason("OOMKilled")
        .withExitCode(137)
        .endTerminated()
        .endLastState()
        .build();
  }

  private static ContainerStatus crashLooping() {
    return app()
        .withRestartCount(1)
        .withNewState()
        .withNewWaiting()
        .withReason("CrashLoopBackOff")
        .endWaiting()
        .endState()
        .build();
  }

  private static ContainerStatus restarted(int times) {
    return app()
        .withRestartCount(times)
        .withNewState()
        .withNewRunning()
        .endRunning()
        .endState()
        .build();
  }

  @Test
  void readsSizesFromTheTemplate() {
    WorkloadState s = observe(quoteApi());

    assertThat(s.name()).isEqualTo("quote-api");
    assertThat(s.replicas()).isEqualTo(4);
    assertThat(s.podLimitBytes()).isEqualTo((1024 + 128) * MIB);
    assertThat(s.otherContainersBytes()).isEqualTo(128 * MIB);
    assertThat(s.heapBytes()).isEqualTo(768 * MIB);
    assertThat(s.optedOut()).isFalse();
    assertThat(s.inFlight()).isEmpty();
    assertThat(s.failure()).isEmpty();
    assertThat(s.rolledBack()).isFalse();
    assertThat(s.lastChangedAt()).isEmpty();
  }

  @Test
  void surgeIsTheIntegerMaxSurge() {
    var d =
        quoteApi()
            .editSpec()
            .withNewStrategy()
            .withType("RollingUpdate")
            .withNewRollingUpdate()
            .withMaxSurge(new IntOrString(2))
            .endRollingUpdate()
            .endStrategy()
            .endSpec();

    assertThat(observe(d).surgePods()).isEqualTo(2);
  }

  @ParameterizedTest
  @CsvSource({"4, 25%, 1", "4, 30%, 2", "10, 25%, 3", "3, 100%, 3", "4, 0%, 0"})
  void percentSurgeRoundsUp(int replicas, String maxSurge, int surge) {
    var d =
        quoteApi()
            .editSpec()
            .withReplicas(replicas)
            .withNewStrategy()
            .withType("RollingUpdate")
            .withNewRollingUpdate()
            .withMaxSurge(new IntOrString(maxSurge))
            .endRollingUpdate()
            .endStrategy()
            .endSpec();

    assertThat(observe(d).surgePods()).isEqualTo(surge);
  }

  // Kubernetes default maxSurge 25%, rounded up (Deployment documentation, "Max Surge").
  @ParameterizedTest
  @CsvSource({"1, 1", "4, 1", "5, 2", "8, 2", "9, 3"})
  void surgeDefaultsToAQuarterRoundedUp(int replicas, int surge) {
    var noStrategy = quoteApi().editSpec().withReplicas(replicas).endSpec();
    var noRollingUpdate =
        quoteApi()
            .editSpec()
            .withReplicas(replicas)
            .withNewStrategy()
            .withType("RollingUpdate")
            .endStrategy()
            .endSpec();

    assertThat(observe(noStrategy).surgePods()).isEqualTo(surge);
    assertThat(observe(noRollingUpdate).surgePods()).isEqualTo(surge);
  }

  @Test
  void unsetReplicasCountAsOneWithOneSurgePod() {
    WorkloadState s = observe(quoteApi().editSpec().withReplicas(null).endSpec());

    assertThat(s.replicas()).isEqualTo(1);
    assertThat(s.surgePods()).isEqualTo(1);
  }

  @Test
  void recreateHasNoSurge() {
    var d = quoteApi().editSpec().withNewStrategy().withType("Recreate").endStrategy().endSpec();

    assertThat(observe(d).surgePods()).isZero();
  }

  @Test
  void aStatefulSetHasNoSurge() {
    Deployment d = quoteApi().build();
    var set =
        new StatefulSetBuilder()
            .withMetadata(d.getMetadata())
            .withNewSpec()
            .withReplicas(3)
            .withNewSelector()
            .withMatchLabels(SELECTOR)
            .endSelector()
            .withTemplate(d.getSpec().getTemplate())
            .endSpec()
            .build();

    WorkloadState s = Observer.observe(new PoolWorkload(set), List.of(), ROLLOUT, NOW);

    assertThat(s.replicas()).isEqualTo(3);
    assertThat(s.surgePods()).isZero();
  }

  /** The deployment's four pods on the new template, each Ready since {@code secondsAgo}. */
  private static Pod[] readyFor(long... secondsAgo) {
    Pod[] pods = new Pod[secondsAgo.length];
    for (int i = 0; i < pods.length; i++) {
      pods[i] =
          new PodBuilder(pod("quote-api-6b7f9-p" + i, SELECTOR, NEW_OPTIONS, running()))
              .editStatus()
              .addNewCondition()
              .withType("Ready")
              .withStatus("True")
              .withLastTransitionTime(NOW.minusSeconds(secondsAgo[i]).toString())
              .endCondition()
              .endStatus()
              .build();
    }
    return pods;
  }

  private static final long SETTLED = Observer.SETTLE_SECONDS;

  @Test
  void rolloutIsDoneWhenEveryPodIsUpdatedAvailableAndReadyLongEnough() {
    assertThat(observe(quoteApi(), readyFor(SETTLED, SETTLED, 90, 400)).rolloutDone()).isTrue();
  }

  @Test
  void rolloutIsNotDoneWhileAPodIsFreshlyReady() {
    // The controller calls the pod available at once; a JVM short of memory may die a second later.
    assertThat(observe(quoteApi(), readyFor(SETTLED, SETTLED, SETTLED, SETTLED - 1)).rolloutDone())
        .isFalse();
  }

  @Test
  void rolloutIsNotDoneWithFewerSettledPodsThanReplicas() {
    assertThat(observe(quoteApi(), readyFor(90, 90, 90)).rolloutDone()).isFalse();
    assertThat(observe(quoteApi()).rolloutDone()).as("no pods seen yet").isFalse();
  }

  @Test
  void aPodThatIsNotReadyDoesNotCountAsSettled() {
    Pod unready =
        new PodBuilder(readyFor(90)[0])
            .editStatus()
            .editFirstCondition()
            .withStatus("False")
            .endCondition()
            .endStatus()
            .build();
    Pod[] pods = readyFor(90, 90, 90, 90);
    pods[3] = unready;

    assertThat(observe(quoteApi(), pods).rolloutDone()).isFalse();
  }

  @Test
  void rolloutIsNotDoneBeforeTheControllerSawTheNewGeneration() {
    var d = quoteApi().editStatus().withObservedGeneration(GENERATION - 1).endStatus();

    assertThat(observe(d, readyFor(90, 90, 90, 90)).rolloutDone()).isFalse();
  }

  @Test
  void rolloutIsNotDoneWhileAReplacedPodIsStillShuttingDown() {
    // The Deployment controller counts a terminating pod in none of its status figures, but the
    // pod keeps its memory until it exits.
    Pod leaving =
        new PodBuilder(pod("quote-api-5c4d8-q9w2e", SELECTOR, OLD_OPTIONS, running()))
            .editMetadata()
            .withDeletionTimestamp("2026-12-02T08:00:00Z")
            .endMetadata()
            .build();
    Pod elsewhere =
        new PodBuilder(pod("billing-7f6d-a1b2c", Map.of("app", "billing"), OLD_OPTIONS, running()))
            .editMetadata()
            .withDeletionTimestamp("2026-12-02T08:00:00Z")
            .endMetadata()
            .build();

    Pod[] settled = readyFor(90, 90, 90, 90);

    assertThat(observe(quoteApi(), concat(settled, leaving)).rolloutDone()).isFalse();
    assertThat(observe(quoteApi(), concat(settled, elsewhere)).rolloutDone()).isTrue();
  }

  private static Pod[] concat(Pod[] pods, Pod more) {
    Pod[] all = java.util.Arrays.copyOf(pods, pods.length + 1);
    all[pods.length] = more;
    return all;
  }

  @Test
  void rolloutIsNotDoneWhileOldPodsRemain() {
    var surging = quoteApi().editStatus().withReplicas(5).withUpdatedReplicas(2).endStatus();
    var unavailable = quoteApi().editStatus().withAvailableReplicas(3).endStatus();

    assertThat(observe(surging, readyFor(90, 90, 90, 90)).rolloutDone()).isFalse();
    assertThat(observe(unavailable, readyFor(90, 90, 90, 90)).rolloutDone()).isFalse();
  }

  @Test
  void rolloutIsNotDoneWithoutStatus() {
    assertThat(observe(quoteApi().withStatus(null)).rolloutDone()).isFalse();
  }

  @ParameterizedTest
  @CsvSource({"true, true", "TRUE, true", "false, false", "yes, false"})
  void optOutAnnotation(String value, boolean optedOut) {
    var d = quoteApi().editMetadata().addToAnnotations(Annotations.OPT_OUT, value).endMetadata();

    assertThat(observe(d).optedOut()).isEqualTo(optedOut);
  }

  @Test
  void inFlightRecordComesFromTheRolloutAnnotation() {
    assertThat(observe(inFlight()).inFlight()).contains(IN_FLIGHT);
  }

  @ParameterizedTest
  @ValueSource(strings = {"", "not json", "[1, 2]"})
  void anUnreadableRolloutAnnotationIsNoRecord(String value) {
    var d = quoteApi().editMetadata().addToAnnotations(Annotations.ROLLOUT, value).endMetadata();

    assertThat(observe(d).inFlight()).isEmpty();
  }

  @Test
  void newPodOomKilledNowIsAFailure() {
    assertThat(observe(inFlight(), newPod(oomKilledNow())).failure())
        .contains("pod quote-api-6b7f9-x2k4q was OOMKilled");
  }

  @Test
  void newPodOomKilledBeforeIsAFailure() {
    assertThat(observe(inFlight(), newPod(oomKilledBefore())).failure())
        .contains("pod quote-api-6b7f9-x2k4q was OOMKilled");
  }

  @Test
  void newPodInCrashLoopBackOffIsAFailure() {
    assertThat(observe(inFlight(), newPod(crashLooping())).failure())
        .contains("pod quote-api-6b7f9-x2k4q is crash-looping");
  }

  @Test
  void threeRestartsOfANewPodAreAFailure() {
    assertThat(observe(inFlight(), newPod(restarted(3))).failure())
        .contains("pod quote-api-6b7f9-x2k4q restarted 3 times");
  }

  @Test
  void twoRestartsOfANewPodAreNot() {
    assertThat(observe(inFlight(), newPod(restarted(2))).failure()).isEmpty();
  }

  @Test
  void aHealthyNewPodIsNoFailure() {
    assertThat(observe(inFlight(), newPod(running())).failure()).isEmpty();
  }

  @Test
  void aFailingPodOnTheOldTemplateIsIgnored() {
    Pod old = pod("quote-api-58c4d-r7mzp", SELECTOR, OLD_OPTIONS, oomKilledNow());

    assertThat(observe(inFlight(), old).failure()).isEmpty();
  }

  @Test
  void aFailingPodOutsideTheSelectorIsIgnored() {
    // Another team's service that happens to run the same options.
    Pod other =
        pod("route-planner-5d8-qq9lt", Map.of("app", "route-planner"), NEW_OPTIONS, oomKilledNow());

    assertThat(observe(inFlight(), other).failure()).isEmpty();
  }

  @Test
  void aPodMatchesWhenItsLabelsIncludeTheSelector() {
    Map<String, String> labels = Map.of("app", "quote-api", "pod-template-hash", "6b7f9");
    Pod labelled = pod("quote-api-6b7f9-x2k4q", labels, NEW_OPTIONS, oomKilledNow());

    assertThat(observe(inFlight(), labelled).failure()).isPresent();
  }

  @Test
  void aFailingSidecarIsNotTheJvmsFailure() {
    ContainerStatus sidecar =
        new ContainerStatusBuilder(oomKilledNow()).withName("log-shipper").build();

    assertThat(observe(inFlight(), newPod(sidecar)).failure()).isEmpty();
  }

  @Test
  void aPodWithoutStatusIsNoFailure() {
    Pod pending = new PodBuilder(newPod(running())).withStatus(null).build();

    assertThat(observe(inFlight(), pending).failure()).isEmpty();
  }

  @Test
  void failuresAreOnlyLookedForDuringARollout() {
    assertThat(observe(quoteApi(), newPod(oomKilledNow())).failure()).isEmpty();
  }

  @Test
  void aFailureIsFoundAmongHealthyAndOldPods() {
    Pod healthy = pod("quote-api-6b7f9-a1b2c", SELECTOR, NEW_OPTIONS, running());
    Pod old = pod("quote-api-58c4d-r7mzp", SELECTOR, OLD_OPTIONS, crashLooping());
    Pod failing = pod("quote-api-6b7f9-d3e4f", SELECTOR, NEW_OPTIONS, restarted(4));

    assertThat(observe(inFlight(), healthy, old, failing).failure())
        .contains("pod quote-api-6b7f9-d3e4f restarted 4 times");
  }

  @Test
  void rolledBackWhileTheTemplateIsTheRestoredOne() {
    String restored = Observer.fingerprint(template(NEW_OPTIONS, "1Gi"));
    String other = Observer.fingerprint(template(OLD_OPTIONS, "1280Mi"));

    var unchanged =
        quoteApi().editMetadata().addToAnnotations(Annotations.ROLLED_BACK, restored).endMetadata();
    var changedSince =
        quoteApi().editMetadata().addToAnnotations(Annotations.ROLLED_BACK, other).endMetadata();

    assertThat(observe(unchanged).rolledBack()).isTrue();
    assertThat(observe(changedSince).rolledBack()).isFalse();
  }

  @Test
  void lastChangedAtComesFromTheAnnotation() {
    var d =
        quoteApi()
            .editMetadata()
            .addToAnnotations(Annotations.CHANGED_AT, "2025-03-04T11:30:00+01:00")
            .endMetadata();

    assertThat(observe(d).lastChangedAt()).contains(Instant.parse("2025-03-04T10:30:00Z"));
  }

  @Test
  void anUnreadableChangedAtIsIgnored() {
    var d =
        quoteApi()
            .editMetadata()
            .addToAnnotations(Annotations.CHANGED_AT, "last tuesday")
            .endMetadata();

    assertThat(observe(d).lastChangedAt()).isEmpty();
  }

  @Test
  void fingerprintIgnoresHowAQuantityIsSpelt() {
    // The API server stores 1024Mi as 1Gi.
    assertThat(Observer.fingerprint(template(NEW_OPTIONS, "1024Mi")))
        .isEqualTo(Observer.fingerprint(template(NEW_OPTIONS, "1Gi")));
  }

  @Test
  void fingerprintIgnoresFieldsTheApiServerDefaults() {
    PodTemplateSpec defaulted =
        new PodTemplateSpecBuilder(template(NEW_OPTIONS, "1Gi"))
            .editSpec()
            .withRestartPolicy("Always")
            .withTerminationGracePeriodSeconds(30L)
            .editMatchingContainer(c -> "app".equals(c.getName()))
            .withImagePullPolicy("IfNotPresent")
            .withTerminationMessagePath("/dev/termination-log")
            .withTerminationMessagePolicy("File")
            .endContainer()
            .endSpec()
            .build();

    assertThat(Observer.fingerprint(defaulted))
        .isEqualTo(Observer.fingerprint(template(NEW_OPTIONS, "1Gi")));
  }

  @Test
  void fingerprintReadsNoResourcesAsEmptyOnes() {
    // The API server returns "resources: {}" for a container written without any.
    PodTemplateSpec unset =
        new PodTemplateSpecBuilder(template(NEW_OPTIONS, "1Gi"))
            .editSpec()
            .editMatchingContainer(c -> "log-shipper".equals(c.getName()))
            .withResources(null)
            .endContainer()
            .endSpec()
            .build();
    PodTemplateSpec empty =
        new PodTemplateSpecBuilder(unset)
            .editSpec()
            .editMatchingContainer(c -> "log-shipper".equals(c.getName()))
            .withNewResources()
            .endResources()
            .endContainer()
            .endSpec()
            .build();

    assertThat(Observer.fingerprint(empty)).isEqualTo(Observer.fingerprint(unset));
  }

  @Test
  void fingerprintChangesWithTheImage() {
    PodTemplateSpec bumped =
        new PodTemplateSpecBuilder(template(NEW_OPTIONS, "1Gi"))
            .editSpec()
            .editMatchingContainer(c -> "app".equals(c.getName()))
            .withImage("registry.larkspur.example/quote-api:5.12.1")
            .endContainer()
            .endSpec()
            .build();

    assertThat(Observer.fingerprint(bumped))
        .isNotEqualTo(Observer.fingerprint(template(NEW_OPTIONS, "1Gi")));
  }

  @Test
  void fingerprintChangesWithTheMemorySizeAndTheOptions() {
    String base = Observer.fingerprint(template(NEW_OPTIONS, "1Gi"));

    assertThat(Observer.fingerprint(template(NEW_OPTIONS, "1280Mi"))).isNotEqualTo(base);
    assertThat(Observer.fingerprint(template(OLD_OPTIONS, "1Gi"))).isNotEqualTo(base);
  }

  @Test
  void fingerprintIsSixteenHexDigits() {
    assertThat(Observer.fingerprint(template(NEW_OPTIONS, "1Gi"))).matches("[0-9a-f]{16}");
  }
}
