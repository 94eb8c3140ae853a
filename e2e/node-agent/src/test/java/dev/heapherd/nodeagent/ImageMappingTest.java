package dev.heapherd.nodeagent;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import java.nio.file.Path;
import java.util.Optional;
import org.junit.jupiter.api.Test;

class ImageMappingTest {

  @Test
  void repositoryDropsTagAndDigestButKeepsRegistryPort() {
    assertThat(ImageMapping.repository("synthetic-workload")).isEqualTo("synthetic-workload");
    assertThat(ImageMapping.repository("ghcr.io/team/heapherd:0.1.0"))
        .isEqualTo("ghcr.io/team/heapherd");
    assertThat(ImageMapping.repository("registry:5000/team/app"))
        .isEqualTo("registry:5000/team/app");
    assertThat(ImageMapping.repository("registry:5000/app:1@sha256:abc"))
        .isEqualTo("registry:5000/app");
  }

  @Test
  void suffixMatchesWholePathSegmentsOnly() {
    ImageMapping operator = ImageMapping.operator(Path.of("heapherd.jar"));
    assertThat(operator.matches("heapherd")).isTrue();
    assertThat(operator.matches("ghcr.io/team/heapherd:0.1.0")).isTrue();
    assertThat(operator.matches("ghcr.io/team/not-heapherd:1")).isFalse();
    assertThat(operator.matches("ghcr.io/heapherd/synthetic-workload:1")).isFalse();
    assertThat(operator.portArgument(9000)).contains("--http-address=127.0.0.1:9000");
  }

  @Test
  void parsesSuffixJarAndSettings() {
    ImageMapping mapping =
        ImageMapping.parse(
            "team/app=/opt/app.jar,port-arg=--listen=127.0.0.1:{port},ready-path=/up");
    assertThat(mapping.suffix()).isEqualTo("team/app");
    assertThat(mapping.file()).isEqualTo(Path.of("/opt/app.jar"));
    assertThat(mapping.portArgument(8080)).contains("--listen=127.0.0.1:8080");
    assertThat(mapping.readyPath()).contains("/up");
    assertThat(ImageMapping.parse("app=/opt/app.jar").portArgument()).isEqualTo(Optional.empty());
  }

  @Test
  void rejectsMalformedMappingsInOneLine() {
    assertThatThrownBy(() -> ImageMapping.parse("app.jar"))
        .hasMessage("--image must be SUFFIX=FILE[,port-arg=ARG][,ready-path=PATH], got 'app.jar'");
    assertThatThrownBy(() -> ImageMapping.parse("app=/a.jar,port-arg=--port"))
        .hasMessage("port-arg for 'app' must contain {port}, got '--port'");
    assertThatThrownBy(() -> ImageMapping.parse("app=/a.jar,ready=/x"))
        .hasMessage(
            "--image 'app=/a.jar,ready=/x': unknown setting 'ready=/x' (port-arg or ready-path)");
    assertThatThrownBy(() -> ImageMapping.parse("app=/a.jar,ready-path=up"))
        .hasMessage("ready-path for 'app' must start with /, got 'up'");
  }
}
