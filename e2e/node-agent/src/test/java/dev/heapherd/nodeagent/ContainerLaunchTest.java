package dev.heapherd.nodeagent;

import static org.assertj.core.api.Assertions.assertThat;

import io.fabric8.kubernetes.api.model.Container;
import io.fabric8.kubernetes.api.model.ContainerBuilder;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.PodBuilder;
import io.fabric8.kubernetes.api.model.Quantity;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Optional;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class ContainerLaunchTest {

  @TempDir Path dir;
  private ImageTable images;
  private Path jar;

  @BeforeEach
  void table() throws IOException {
    jar = Files.writeString(dir.resolve("workload.jar"), "not really a jar");
    images = ImageTable.of(List.of(ImageMapping.workload(jar)), dir.resolve("images"));
  }

  @Test
  void runsTheMappedJarWithEnvironmentArgsAndThePortLast() {
    Container container =
        base()
            .addToArgs("--port", "9999", "--live-mib", "8")
            .addNewEnv()
            .withName("JAVA_TOOL_OPTIONS")
            .withValue("-Xmx96m")
            .endEnv()
            .addNewEnv()
            .withName("POD")
            .withNewValueFrom()
            .withNewFieldRef()
            .withFieldPath("metadata.name")
            .endFieldRef()
            .endValueFrom()
            .endEnv()
            .withNewResources()
            .addToLimits("memory", new Quantity("80Mi"))
            .endResources()
            .build();

    ContainerLaunch.Jar launch =
        (ContainerLaunch.Jar) ContainerLaunch.plan(pod(container), container, images, "node-1");

    assertThat(launch.command(Path.of("/jdk/bin/java"), Optional.of(41000)))
        .containsExactly(
            "/jdk/bin/java",
            "-jar",
            jar.toString(),
            "--port",
            "9999",
            "--live-mib",
            "8",
            "--port=41000");
    assertThat(launch.environment())
        .containsEntry("JAVA_TOOL_OPTIONS", "-Xmx96m")
        .containsEntry("POD", "web-1")
        .containsEntry("HOSTNAME", "web-1");
    assertThat(launch.memoryLimitBytes()).hasValue(80L * 1024 * 1024);
    assertThat(launch.imageId()).startsWith("sha256:").hasSize("sha256:".length() + 64);
  }

  @Test
  void unknownImageWaitsWithOurReason() {
    Container container = new ContainerBuilder().withName("app").withImage("busybox:1.36").build();

    ContainerLaunch launch = ContainerLaunch.plan(pod(container), container, images, "node-1");

    assertThat(launch)
        .isEqualTo(
            new ContainerLaunch.NotRunnable(
                "ImageNotRunnable",
                "nothing is mapped to image busybox:1.36 on this node (mapped repository suffixes:"
                    + " synthetic-workload)"));
  }

  @Test
  void settingsThatCannotBecomeAProcessAreConfigErrors() {
    Container command = base().addToCommand("sh", "-c", "true").build();
    Container secret =
        base()
            .addNewEnv()
            .withName("TOKEN")
            .withNewValueFrom()
            .withNewSecretKeyRef()
            .withName("s")
            .withKey("k")
            .endSecretKeyRef()
            .endValueFrom()
            .endEnv()
            .build();

    assertThat(ContainerLaunch.plan(pod(command), command, images, "node-1"))
        .isInstanceOf(ContainerLaunch.NotRunnable.class)
        .extracting(l -> ((ContainerLaunch.NotRunnable) l).reason())
        .isEqualTo("CreateContainerConfigError");
    assertThat(ContainerLaunch.plan(pod(secret), secret, images, "node-1"))
        .extracting(l -> ((ContainerLaunch.NotRunnable) l).message())
        .asString()
        .startsWith("env TOKEN: only values and fieldRef");
  }

  private static ContainerBuilder base() {
    return new ContainerBuilder().withName("app").withImage("example.org/synthetic-workload:1");
  }

  private static Pod pod(Container container) {
    return new PodBuilder()
        .withNewMetadata()
        .withName("web-1")
        .withNamespace("shop")
        .withUid("uid-1")
        .endMetadata()
        .withNewSpec()
        .withContainers(container)
        .endSpec()
        .build();
  }
}
