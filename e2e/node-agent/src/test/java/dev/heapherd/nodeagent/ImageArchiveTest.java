package dev.heapherd.nodeagent;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Unpacking docker-archive tarballs made here with the real tar, as docker save lays them out. */
class ImageArchiveTest {

  private static final Duration TOOL = Duration.ofSeconds(30);

  private static final String CONFIG =
      "{\"architecture\":\"amd64\",\"os\":\"linux\",\"config\":{\"Entrypoint\":[\"/app/run\"],"
          + "\"Cmd\":[\"--serve\"],\"Env\":[\"PATH=/app\",\"MODE=test\"],\"User\":\"svc\","
          + "\"WorkingDir\":\"/app\"}}";

  @TempDir Path dir;
  private Path build;
  private Path images;

  @BeforeEach
  void folders() throws IOException {
    build = Files.createDirectories(dir.resolve("build"));
    images = dir.resolve("images");
  }

  @Test
  void unpacksLayersInOrderAndReportsTheConfigDigestAsTheImageId() throws IOException {
    layer("one", "app/run", "first");
    layer("two", "etc/passwd", "svc:x:1234:4321:service:/app:/sbin/nologin\n");
    Path archive = archive(List.of("one.tar", "two.tar"), "manifest.json");

    ImageArchive.Unpacked image = ImageArchive.unpack(archive, images);

    assertThat(image.rootfs().resolve("app/run")).hasContent("first");
    assertThat(image.config().entrypoint()).containsExactly("/app/run");
    assertThat(image.config().cmd()).containsExactly("--serve");
    assertThat(image.config().env()).containsExactly("PATH=/app", "MODE=test");
    assertThat(image.config().workingDir()).isEqualTo("/app");
    // The image ID is the config's SHA-256, as coreutils' sha256sum computes it.
    String sha256sum =
        Processes.run(List.of("sha256sum", build.resolve("config.json").toString()), TOOL)
            .get(0)
            .split(" ")[0];
    assertThat(image.imageId()).isEqualTo("sha256:" + sha256sum);
    assertThat(ImageArchive.user(image)).contains(new ImageArchive.UserIds(1234, 4321));
  }

  @Test
  void anImageUnpackedBeforeIsReused() throws IOException {
    layer("one", "app/run", "first");
    Path archive = archive(List.of("one.tar"), "manifest.json");
    ImageArchive.Unpacked first = ImageArchive.unpack(archive, images);
    Files.writeString(first.rootfs().resolve("app/marker"), "kept");

    ImageArchive.Unpacked again = ImageArchive.unpack(archive, images);

    assertThat(again).isEqualTo(first);
    assertThat(again.rootfs().resolve("app/marker")).hasContent("kept");
  }

  @Test
  void refusesLayersThatCouldWriteOutsideTheRootFolder() throws IOException {
    Path content = Files.createDirectories(build.resolve("evil"));
    Processes.run(List.of("ln", "-s", "/etc", content.resolve("etc").toString()), TOOL);
    Processes.run(
        List.of("tar", "-cf", build.resolve("evil.tar").toString(), "-C", content.toString(), "."),
        TOOL);
    Path archive = archive(List.of("evil.tar"), "manifest.json");

    assertThatThrownBy(() -> ImageArchive.unpack(archive, images))
        .isInstanceOf(IllegalArgumentException.class)
        .hasMessageContaining("holds a link or special file")
        .hasMessageContaining("only regular files and folders");
  }

  @Test
  void refusesWhiteoutsAndLayerNamesThatLeaveTheArchive() throws IOException {
    layer("wh", "app/.wh.old", "");
    Path whiteout = archive(List.of("wh.tar"), "manifest.json");
    assertThatThrownBy(() -> ImageArchive.unpack(whiteout, images))
        .hasMessageContaining("deletes files (./app/.wh.old)");

    Path escaping = archive(List.of("../outside.tar"), "manifest.json");
    assertThatThrownBy(() -> ImageArchive.unpack(escaping, images))
        .hasMessageContaining("no file ../outside.tar in the tarball");
  }

  @Test
  void saysWhichLayoutItReads() throws IOException {
    layer("one", "app/run", "first");
    Path archive = archive(List.of("one.tar"), "index-only.json");

    assertThatThrownBy(() -> ImageArchive.unpack(archive, images))
        .hasMessageContaining(
            "no manifest.json; save the image in the docker-archive layout (jib:buildTar,"
                + " docker save)");
    assertThatThrownBy(() -> ImageArchive.unpack(dir.resolve("missing.tar"), images))
        .hasMessageContaining("image tarball not found");
  }

  /** A layer tarball {@code name}.tar holding one file. */
  private void layer(String name, String file, String content) throws IOException {
    Path root = build.resolve(name);
    Path target = root.resolve(file);
    Files.createDirectories(target.getParent());
    Files.writeString(target, content);
    Processes.run(
        List.of("tar", "-cf", build.resolve(name + ".tar").toString(), "-C", root.toString(), "."),
        TOOL);
  }

  /** The image tarball: its manifest (written as {@code manifestName}), config and layers. */
  private Path archive(List<String> layers, String manifestName) throws IOException {
    Files.writeString(build.resolve("config.json"), CONFIG);
    String layerList = String.join("\",\"", layers);
    Files.writeString(
        build.resolve(manifestName),
        "[{\"Config\":\"config.json\",\"RepoTags\":[\"team/app:1\"],\"Layers\":[\""
            + layerList
            + "\"]}]");
    Path archive = dir.resolve("image-" + Math.abs(layers.hashCode()) + manifestName + ".tar");
    List<String> command =
        new ArrayList<>(
            List.of("tar", "-cf", archive.toString(), "-C", build.toString(), "config.json"));
    command.add(manifestName);
    for (String layer : layers) {
      if (Files.exists(build.resolve(layer))) {
        command.add(layer);
      }
    }
    Processes.run(command, TOOL);
    return archive;
  }
}
