package dev.heapherd.nodeagent;

import static org.assertj.core.api.Assertions.assertThat;

import io.fabric8.kubernetes.api.model.ContainerStatus;
import io.fabric8.kubernetes.api.model.ContainerStatusBuilder;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.PodBuilder;
import io.fabric8.kubernetes.api.model.PodCondition;
import io.fabric8.kubernetes.api.model.PodStatus;
import io.fabric8.kubernetes.api.model.PodStatusBuilder;
import java.time.Instant;
import java.util.List;
import java.util.Optional;
import org.junit.jupiter.api.Test;

class PodStatusReportTest {

  private static final Instant START = Instant.parse("2026-01-01T10:00:00Z");
  private static final Instant LATER = Instant.parse("2026-01-01T10:05:00Z");

  @Test
  void phaseFollowsTheKubeletsRules() {
    ContainerStatus running = running(true);
    ContainerStatus neverRan = waiting(false);
    ContainerStatus backingOff = waiting(true);
    ContainerStatus exited0 = terminated(0);
    ContainerStatus exited1 = terminated(1);

    assertThat(PodStatusReport.phase(List.of(running, neverRan), RestartPolicy.ALWAYS))
        .isEqualTo("Pending");
    assertThat(PodStatusReport.phase(List.of(running, backingOff), RestartPolicy.ALWAYS))
        .isEqualTo("Running");
    assertThat(PodStatusReport.phase(List.of(backingOff), RestartPolicy.ALWAYS))
        .isEqualTo("Running");
    assertThat(PodStatusReport.phase(List.of(exited0, exited0), RestartPolicy.NEVER))
        .isEqualTo("Succeeded");
    assertThat(PodStatusReport.phase(List.of(exited0, exited1), RestartPolicy.NEVER))
        .isEqualTo("Failed");
    assertThat(PodStatusReport.phase(List.of(exited0, backingOff), RestartPolicy.ON_FAILURE))
        .isEqualTo("Running");
  }

  @Test
  void readyWhenEveryContainerIsReadyAndTransitionTimesHold() {
    Pod pod = pod();
    PodStatus first =
        PodStatusReport.desired(
            pod, List.of(running(false)), Optional.empty(), START, List.of(), START);
    PodStatus second =
        PodStatusReport.desired(
            pod, List.of(running(true)), Optional.empty(), START, first.getConditions(), LATER);
    PodStatus third =
        PodStatusReport.desired(
            pod,
            List.of(running(true)),
            Optional.empty(),
            START,
            second.getConditions(),
            LATER.plusSeconds(60));

    assertThat(condition(first, "Ready").getStatus()).isEqualTo("False");
    assertThat(condition(first, "Ready").getMessage())
        .isEqualTo("containers with unready status: [app]");
    assertThat(condition(second, "Ready").getStatus()).isEqualTo("True");
    assertThat(condition(second, "Ready").getLastTransitionTime())
        .isEqualTo("2026-01-01T10:05:00Z");
    assertThat(condition(second, "PodScheduled").getLastTransitionTime())
        .isEqualTo("2026-01-01T10:00:00Z");
    assertThat(third).isEqualTo(second);
    assertThat(second.getPodIP()).isEqualTo("127.0.0.1");
    assertThat(second.getHostIPs().get(0).getIp()).isEqualTo("127.0.0.1");
    assertThat(second.getStartTime()).isEqualTo("2026-01-01T10:00:00Z");
  }

  @Test
  void writtenStatusKeepsWhatOthersSet() {
    PodStatus current =
        new PodStatusBuilder()
            .withQosClass("Burstable")
            .addNewCondition()
            .withType("DisruptionTarget")
            .withStatus("True")
            .endCondition()
            .addNewCondition()
            .withType("Ready")
            .withStatus("False")
            .endCondition()
            .build();
    PodStatus desired =
        PodStatusReport.desired(
            pod(), List.of(running(true)), Optional.empty(), START, List.of(), START);

    PodStatus merged = PodStatusReport.merged(current, desired);

    assertThat(merged.getQosClass()).isEqualTo("Burstable");
    assertThat(merged.getConditions())
        .extracting(PodCondition::getType)
        .containsExactly(
            "PodScheduled", "Initialized", "ContainersReady", "Ready", "DisruptionTarget");
    assertThat(condition(merged, "Ready").getStatus()).isEqualTo("True");
  }

  private static PodCondition condition(PodStatus status, String type) {
    return status.getConditions().stream()
        .filter(c -> type.equals(c.getType()))
        .findFirst()
        .orElseThrow();
  }

  private static Pod pod() {
    return new PodBuilder()
        .withNewMetadata()
        .withName("web-1")
        .endMetadata()
        .withNewSpec()
        .addNewContainer()
        .withName("app")
        .endContainer()
        .endSpec()
        .build();
  }

  private static ContainerStatus running(boolean ready) {
    return new ContainerStatusBuilder()
        .withName("app")
        .withReady(ready)
        .withNewState()
        .withNewRunning()
        .withStartedAt("2026-01-01T10:00:00Z")
        .endRunning()
        .endState()
        .build();
  }

  private static ContainerStatus waiting(boolean ranBefore) {
    ContainerStatusBuilder status =
        new ContainerStatusBuilder()
            .withName("app")
            .withReady(false)
            .withNewState()
            .withNewWaiting()
            .withReason("CrashLoopBackOff")
            .endWaiting()
            .endState();
    if (ranBefore) {
      status
          .withNewLastState()
          .withNewTerminated()
          .withExitCode(137)
          .endTerminated()
          .endLastState();
    }
    return status.build();
  }

  private static ContainerStatus terminated(int exitCode) {
    return new ContainerStatusBuilder()
        .withName("app")
        .withReady(false)
        .withNewState()
        .withNewTerminated()
        .withExitCode(exitCode)
        .endTerminated()
        .endState()
        .build();
  }
}
