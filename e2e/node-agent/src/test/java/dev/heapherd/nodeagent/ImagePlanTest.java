package dev.heapherd.nodeagent;

import static org.assertj.core.api.Assertions.assertThat;

import io.fabric8.kubernetes.api.model.Container;
import io.fabric8.kubernetes.api.model.ContainerBuilder;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.PodBuilder;
import io.fabric8.kubernetes.api.model.PodSecurityContext;
import io.fabric8.kubernetes.api.model.Volume;
import io.fabric8.kubernetes.api.model.VolumeBuilder;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.OptionalLong;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * How an image's container becomes a process, checked against the rules the Kubernetes
 * documentation states ("Define a Command and Arguments for a Container", "Configure a Security
 * Context for a Pod or Container").
 */
class ImagePlanTest {

  private static final String IMAGE = "registry.example/team/heapherd:0.1.0";

  @TempDir Path dir;
  private ImageArchive.Unpacked image;
  private final ImageMapping mapping = ImageMapping.operator(Path.of("heapherd-image.tar"));

  @BeforeEach
  void unpackedImage() throws IOException {
    Path rootfs = Files.createDirectories(dir.resolve("rootfs/etc"));
    Files.writeString(rootfs.resolve("passwd"), "nonroot:x:65532:65532::/home:/sbin/nologin\n");
    image = unpacked("nonroot", List.of("/opt/java/bin/java", "-cp", "/app"), List.of("--help"));
  }

  @Test
  void commandReplacesTheEntrypointAndArgsTheCmd() {
    assertThat(argv(base().build()))
        .as("neither: the image's entrypoint and cmd")
        .containsExactly("/opt/java/bin/java", "-cp", "/app", "--help");
    assertThat(argv(base().withArgs("operator").build()))
        .as("args only: the entrypoint with the args")
        .containsExactly("/opt/java/bin/java", "-cp", "/app", "operator");
    assertThat(argv(base().withCommand("/bin/tool").build()))
        .as("command only: the image's cmd is dropped")
        .containsExactly("/bin/tool");
    assertThat(argv(base().withCommand("/bin/tool").withArgs("-v").build()))
        .containsExactly("/bin/tool", "-v");
  }

  @Test
  void runsUnderUnshareInItsOwnRootAsItsUserWithThePortLast() {
    ContainerLaunch.Image launch = (ContainerLaunch.Image) plan(pod(), base().build());

    assertThat(launch.command(Path.of("/state/pods/ns_p/operator.rootfs"), Optional.of(41000)))
        .containsExactly(
            "/usr/bin/unshare",
            "--mount",
            "--mount-proc",
            "--root=/state/pods/ns_p/operator.rootfs",
            "--wd=/tmp",
            "--setuid=65532",
            "--setgid=65532",
            "--",
            "/opt/java/bin/java",
            "-cp",
            "/app",
            "--help",
            "--http-address=127.0.0.1:41000");
  }

  @Test
  void theContainersUserWinsOverThePodsWhichWinsOverTheImages() {
    Pod pod = pod();
    pod.getSpec().setSecurityContext(new PodSecurityContext());
    pod.getSpec().getSecurityContext().setRunAsUser(5000L);
    pod.getSpec().getSecurityContext().setRunAsGroup(5001L);

    assertThat(user(pod, base().build())).isEqualTo(new ImageArchive.UserIds(5000, 5001));
    assertThat(
            user(
                pod,
                base().withNewSecurityContext().withRunAsUser(6000L).endSecurityContext().build()))
        .isEqualTo(new ImageArchive.UserIds(6000, 5001));
    assertThat(user(pod(), base().build())).isEqualTo(new ImageArchive.UserIds(65532, 65532));
  }

  @Test
  void runAsNonRootRefusesAnImageThatRunsAsRoot() {
    image = unpacked("", List.of("/bin/app"), List.of());
    Pod pod = pod();
    pod.getSpec().setSecurityContext(new PodSecurityContext());
    pod.getSpec().getSecurityContext().setRunAsNonRoot(true);

    assertThat(plan(pod, base().build()))
        .isEqualTo(
            new ContainerLaunch.NotRunnable(
                "CreateContainerConfigError",
                "container has runAsNonRoot and image will run as root"));
  }

  @Test
  void mountsEmptyDirsAndTheTokenAndRefusesOtherVolumes() {
    Pod pod = pod();
    pod.getSpec()
        .setVolumes(
            List.of(
                new VolumeBuilder().withName("tmp").withNewEmptyDir().endEmptyDir().build(),
                token(),
                new VolumeBuilder()
                    .withName("settings")
                    .withNewConfigMap()
                    .withName("s")
                    .endConfigMap()
                    .build()));
    Container mounts =
        base()
            .addNewVolumeMount()
            .withName("tmp")
            .withMountPath("/tmp")
            .endVolumeMount()
            .addNewVolumeMount()
            .withName("kube-api-access")
            .withMountPath("/var/run/secrets/kubernetes.io/serviceaccount")
            .endVolumeMount()
            .build();

    ContainerLaunch.Image launch = (ContainerLaunch.Image) plan(pod, mounts);
    assertThat(launch.emptyDirs()).containsExactly("/tmp");
    assertThat(launch.serviceAccountDir())
        .contains("/var/run/secrets/kubernetes.io/serviceaccount");

    ContainerBuilder configMap =
        base().addNewVolumeMount().withName("settings").withMountPath("/etc/s").endVolumeMount();
    assertThat(plan(pod, configMap.build()))
        .isEqualTo(
            new ContainerLaunch.NotRunnable(
                "CreateContainerConfigError",
                "volume settings: only emptyDir volumes and the service-account token can be"
                    + " mounted here"));
    ContainerBuilder climbing =
        base().addNewVolumeMount().withName("tmp").withMountPath("/tmp/../../etc").endVolumeMount();
    assertThat(plan(pod, climbing.build()))
        .isEqualTo(
            new ContainerLaunch.NotRunnable(
                "CreateContainerConfigError",
                "volume mount tmp: mountPath must be an absolute path without .. in it"));
  }

  @Test
  void tokenSetsTheVariablesInClusterClientsReadTheApiServerFrom() {
    ContainerLaunch.Image launch = (ContainerLaunch.Image) plan(pod(), base().build());

    ContainerLaunch.Image withToken =
        launch.withToken(
            new ServiceAccountCredentials.Token(
                "t", Optional.empty(), "https://127.0.0.1:6443", "ns", "heapherd"));

    assertThat(withToken.environment())
        .containsEntry("KUBERNETES_SERVICE_HOST", "127.0.0.1")
        .containsEntry("KUBERNETES_SERVICE_PORT", "6443");
    assertThat(withToken.token()).isPresent();
  }

  private ContainerLaunch plan(Pod pod, Container container) {
    return ImagePlan.plan(
        pod, container, mapping, image, Map.of("HOSTNAME", "p"), OptionalLong.empty());
  }

  private List<String> argv(Container container) {
    return ((ContainerLaunch.Image) plan(pod(), container)).argv();
  }

  private ImageArchive.UserIds user(Pod pod, Container container) {
    return ((ContainerLaunch.Image) plan(pod, container)).user();
  }

  private ImageArchive.Unpacked unpacked(String user, List<String> entrypoint, List<String> cmd) {
    return new ImageArchive.Unpacked(
        "sha256:abc",
        dir.resolve("rootfs"),
        new ImageArchive.Config(entrypoint, cmd, List.of("PATH=/opt/java/bin"), user, "/tmp"));
  }

  private static Volume token() {
    return new VolumeBuilder()
        .withName("kube-api-access")
        .withNewProjected()
        .addNewSource()
        .withNewServiceAccountToken()
        .withPath("token")
        .endServiceAccountToken()
        .endSource()
        .endProjected()
        .build();
  }

  private static ContainerBuilder base() {
    return new ContainerBuilder().withName("operator").withImage(IMAGE);
  }

  private static Pod pod() {
    return new PodBuilder()
        .withNewMetadata()
        .withName("p")
        .withNamespace("ns")
        .withUid("u")
        .endMetadata()
        .withNewSpec()
        .endSpec()
        .build();
  }
}
