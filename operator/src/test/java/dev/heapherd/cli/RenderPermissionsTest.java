package dev.heapherd.cli;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.attribute.PosixFilePermissions;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * `render` against files it may not write, run as a separate process without the privilege to
 * override file modes: as root (CI runs as root) through setpriv, which drops the capabilities that
 * let root write anywhere, so the check is the same as for any other user.
 */
class RenderPermissionsTest {

  private static final Path POOL = ExampleManifests.EXAMPLES.resolve("pool.yaml");
  private static final Path SNAPSHOT = ExampleManifests.EXAMPLES.resolve("snapshot.yaml");

  /** Root's capabilities that bypass file modes (capabilities(7)). */
  private static final String MODE_OVERRIDES = "-dac_override,-dac_read_search";

  /** Long enough for a JVM to start and render the example on a loaded build machine. */
  private static final long RUN_TIMEOUT_SECONDS = 120;

  @TempDir Path dir;

  @Test
  void aReadOnlyManifestLaterInTheFolderLeavesEveryFileAsItWas() throws Exception {
    Path manifests = ExampleManifests.copyInto(dir);
    // Which files the example's render changes, found by rendering to another folder first.
    Path scratch = dir.resolve("scratch");
    PlanRun first = PlanRun.run(renderArgs(manifests, "--output", scratch.toString()));
    assertThat(first.exitCode()).as("stderr: %s", first.err()).isEqualTo(Main.EXIT_CHANGES);
    List<String> changed = List.copyOf(ExampleManifests.contents(scratch).keySet());
    assertThat(changed).hasSizeGreaterThan(1);
    Path last = manifests.resolve(changed.get(changed.size() - 1));
    Files.setPosixFilePermissions(last, PosixFilePermissions.fromString("r--r--r--"));
    Map<String, String> before = ExampleManifests.contents(manifests);

    Result run = unprivileged(renderArgs(manifests));

    assertThat(run.exitCode()).as("stderr: %s", run.err()).isEqualTo(Main.EXIT_BAD_INPUT);
    assertThat(run.err().strip().lines()).hasSize(1);
    assertThat(run.err())
        .contains(last.toAbsolutePath().normalize().toString())
        .contains("permission denied; nothing was changed")
        .doesNotContain("Exception");
    assertThat(ExampleManifests.contents(manifests)).isEqualTo(before);
  }

  @Test
  void aReadOnlyOutputFolderIsRefusedWithNothingWritten() throws Exception {
    Path manifests = ExampleManifests.copyInto(dir);
    Path out = Files.createDirectories(dir.resolve("rendered"));
    Files.setPosixFilePermissions(out, PosixFilePermissions.fromString("r-xr-xr-x"));

    Result run = unprivileged(renderArgs(manifests, "--output", out.toString()));

    assertThat(run.exitCode()).as("stderr: %s", run.err()).isEqualTo(Main.EXIT_BAD_INPUT);
    assertThat(run.err()).contains("permission denied; nothing was changed");
    assertThat(ExampleManifests.contents(out)).isEmpty();
  }

  /** {@code render} of the bundled example's pool and snapshot over {@code manifests}. */
  private static String[] renderArgs(Path manifests, String... options) {
    List<String> args =
        new ArrayList<>(
            List.of(
                "render",
                "--pool",
                POOL.toString(),
                "--snapshot",
                SNAPSHOT.toString(),
                "--manifests",
                manifests.toString()));
    args.addAll(List.of(options));
    return args.toArray(String[]::new);
  }

  /** What a run of the command line as a separate process printed, and how it exited. */
  private record Result(int exitCode, String out, String err) {}

  /** Runs {@code heapherd args...} in a new JVM that file modes apply to. */
  private Result unprivileged(String... args) throws IOException, InterruptedException {
    List<String> command = new ArrayList<>();
    if (isRoot()) {
      command.addAll(
          List.of("setpriv", "--bounding-set=" + MODE_OVERRIDES, "--inh-caps=" + MODE_OVERRIDES));
    }
    command.add(Path.of(System.getProperty("java.home"), "bin", "java").toString());
    command.addAll(List.of("-cp", System.getProperty("java.class.path"), Main.class.getName()));
    command.addAll(List.of(args));
    Path out = dir.resolve("stdout.txt");
    Path err = dir.resolve("stderr.txt");
    Process process =
        new ProcessBuilder(command)
            .redirectOutput(out.toFile())
            .redirectError(err.toFile())
            .start();
    try {
      if (!process.waitFor(RUN_TIMEOUT_SECONDS, TimeUnit.SECONDS)) {
        throw new AssertionError("render did not finish within " + RUN_TIMEOUT_SECONDS + " s");
      }
    } finally {
      process.destroyForcibly();
    }
    return new Result(
        process.exitValue(),
        Files.readString(out, StandardCharsets.UTF_8),
        Files.readString(err, StandardCharsets.UTF_8));
  }

  private static boolean isRoot() throws IOException {
    return ((Integer) Files.getAttribute(Path.of("/proc/self"), "unix:uid")) == 0;
  }
}
